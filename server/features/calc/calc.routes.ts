import { Router, type RequestHandler } from 'express';
import { getUnsafeNumberReason, isLosslessNumber, parse as parseLossless } from 'lossless-json';
import { ZodError } from 'zod';
import { evaluateCalc, toCalcResponse } from '@shared/measure/calc';
import { calcRequestSchema, type CalcRequest } from '@shared/measure/calc.schema';
import { access } from '../../http/authorize';
import { limiter } from '../../http/rate-limit';
import { validate } from '../../http/validate';

/** Requests per minute per IP the public calculator answers; a person checking sums needs a handful. */
export const CALC_RATE_LIMIT_PER_MINUTE = 120;

/**
 * Refuses a JSON number that a double cannot hold (`0.123456789012345678901234567890`): JSON.parse
 * would round it silently, and a figure must be used as sent. Each one is named by its path, with
 * the advice to send it as a decimal string, which is kept exactly.
 */
export const figureDigits: RequestHandler = (req, _res, next) => {
  const raw = (req as { rawBody?: Buffer }).rawBody;
  if (!raw) return next();
  let tree: unknown;
  try {
    tree = parseLossless(raw.toString('utf8'));
  } catch {
    return next(); // express.json already accepted it; nothing more to say
  }
  const issues: ZodError['issues'] = [];
  const walk = (node: unknown, path: (string | number)[]) => {
    if (issues.length >= 20) return;
    if (isLosslessNumber(node)) {
      const reason = getUnsafeNumberReason(node.value);
      if (reason) {
        const field = path.map(String).join('.');
        issues.push({
          code: 'custom',
          path,
          input: undefined,
          message: `${field} is the number ${node.value.length > 40 ? `${node.value.slice(0, 40)}…` : node.value}, which has more digits than a JSON number can hold, so it would be rounded; send it as a decimal string ("${node.value.length > 40 ? '…' : node.value}") to keep it exactly`,
        });
      }
    } else if (Array.isArray(node)) node.forEach((item, i) => walk(item, [...path, i]));
    else if (node && typeof node === 'object') for (const [key, value] of Object.entries(node)) walk(value, [...path, key]);
  };
  walk(tree, []);
  if (issues.length) return next(new ZodError(issues));
  next();
};

/**
 * POST / — the public calculator (mounted at /api/calc): no sign-in, no CSRF token (it changes
 * nothing), rate-limited per IP. The body is validated with the shared schema (400 naming the
 * field otherwise) and computed by the same engine the browser runs.
 */
export function createCalcRouter(opts: { limit?: number; windowMs?: number } = {}) {
  const router = Router();
  router.post(
    '/',
    access.public,
    limiter({
      windowMs: opts.windowMs ?? 60_000,
      limit: opts.limit ?? CALC_RATE_LIMIT_PER_MINUTE,
      message: 'Too many calculations from this address. Wait a minute and try again.',
    }),
    figureDigits,
    validate({ body: calcRequestSchema }),
    (req, res) => {
      res.set('Cache-Control', 'no-store');
      res.json(toCalcResponse(evaluateCalc(req.body as CalcRequest)));
    },
  );
  return router;
}

/** The calculator router with the default limit, for `mount(app, '/api/calc', calcRouter)`. */
export const calcRouter = createCalcRouter();
