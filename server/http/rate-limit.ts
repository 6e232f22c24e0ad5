import { rateLimit } from 'express-rate-limit';
import { tooManyRequests } from './errors';

/**
 * A per-IP limiter whose refusal uses the one error contract (429, code "rate_limited").
 * Limits are per process (memory store), which is enough for one server.
 */
export function limiter(opts: { windowMs: number; limit: number; message?: string }) {
  return rateLimit({
    windowMs: opts.windowMs,
    limit: opts.limit,
    standardHeaders: 'draft-8',
    legacyHeaders: false,
    handler: (_req, _res, next) => next(tooManyRequests(opts.message)),
  });
}
