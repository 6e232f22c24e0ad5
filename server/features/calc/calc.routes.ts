import { Router } from 'express';
import { evaluateCalc, toCalcResponse } from '@shared/measure/calc';
import { calcRequestSchema, type CalcRequest } from '@shared/measure/calc.schema';
import { access } from '../../http/authorize';
import { limiter } from '../../http/rate-limit';
import { validate } from '../../http/validate';

/** Requests per minute per IP the public calculator answers; a person checking sums needs a handful. */
export const CALC_RATE_LIMIT_PER_MINUTE = 120;

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
