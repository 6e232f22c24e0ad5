import type { ErrorRequestHandler, RequestHandler } from 'express';
import { ZodError } from 'zod';
import type { ErrorBody } from '@shared/http/error.schema';
import { AppError, notFound } from './errors';
import type { ErrorCode } from '@shared/http/error-codes';

/** Headers a media response may have set before it failed; the JSON error must not carry them. */
const mediaHeaders = ['Content-Type', 'Content-Disposition', 'ETag', 'Last-Modified', 'Accept-Ranges'];

function body(code: ErrorCode, message: string, details: ErrorBody['error']['details'] = []): ErrorBody {
  return { error: { code, message, details } };
}

const connectionCodes = new Set(['ECONNREFUSED', 'ECONNRESET', 'ETIMEDOUT', 'EPIPE', '57P01', '57P02', '57P03', '08000', '08003', '08006']);
const connectionErrorNames = new Set(['SequelizeConnectionError', 'SequelizeConnectionRefusedError', 'SequelizeConnectionTimedOutError', 'SequelizeHostNotReachableError', 'SequelizeConnectionAcquireTimeoutError']);

/**
 * A lost or refused database connection (Sequelize's connection errors, pg's socket errors and
 * the server-shutdown SQLSTATEs 57P01–57P03 / class 08): a 503 the client can retry, not a 500.
 */
function isDatabaseUnavailable(err: unknown): boolean {
  for (let e = err as { name?: string; code?: string; parent?: unknown; original?: unknown; message?: string } | undefined, i = 0; e && i < 4; i += 1) {
    if (e.name && connectionErrorNames.has(e.name)) return true;
    if (e.code && connectionCodes.has(e.code)) return true;
    if (typeof e.message === 'string' && /Connection terminated|terminating connection due to administrator command|the database system is (shutting down|starting up)/.test(e.message)) return true;
    e = (e.parent ?? e.original) as typeof e;
  }
  return false;
}

/** A disk that is full or cannot be written: refuse with words a builder can act on, not a 500. */
function storageFailure(err: unknown): { status: number; code: ErrorCode; message: string } | null {
  const code = (err as { code?: string } | undefined)?.code;
  if (code === 'ENOSPC' || code === 'EDQUOT') {
    return { status: 507, code: 'storage_full', message: 'The media storage is full, so the file was not kept. Nothing was saved; tell the site admin.' };
  }
  if (code === 'EACCES' || code === 'EPERM' || code === 'EROFS') {
    return { status: 503, code: 'storage_unwritable', message: 'The media storage cannot be written just now, so the file was not kept. Nothing was saved; tell the site admin.' };
  }
  return null;
}

/** 404 in the error contract for any /api or /auth path no router answered. */
export const apiNotFound: RequestHandler = (_req, _res, next) => next(notFound());

/** The one final error middleware: ZodError → 400, AppError → its status, the rest → 500. */
export const errorHandler: ErrorRequestHandler = (err, req, res, _next) => {
  if (res.headersSent) {
    req.log?.error({ err }, 'error after the response started');
    res.end();
    return;
  }
  for (const h of mediaHeaders) res.removeHeader(h);
  // A 416 keeps its Content-Range (bytes */size), which tells the client the real length.
  if (err?.status !== 416 && err?.statusCode !== 416) res.removeHeader('Content-Range');
  res.set('Cache-Control', 'no-store');
  if (err instanceof ZodError) {
    const details = err.issues.map((i) => ({
      path: i.path.map(String).join('.'),
      message: i.message,
    }));
    const first = details[0];
    const message = first
      ? `Some fields are not right: ${first.path || 'the request'}: ${first.message}`
      : 'The request is not in the expected form.';
    res.status(400).json(body('invalid_request', message, details));
    return;
  }
  if (err instanceof AppError) {
    res.status(err.status).json(body(err.code, err.message, err.details));
    return;
  }
  // Errors from body-parser and other http-errors carry a status and are safe to name.
  const status = typeof err?.status === 'number' ? err.status : typeof err?.statusCode === 'number' ? err.statusCode : 500;
  if (status === 403 && err?.code === 'EBADCSRFTOKEN') {
    res.status(403).json(body('csrf_invalid', 'This request is missing its security token. Reload the page and try again.'));
    return;
  }
  if (status === 404) {
    res.status(404).json(body('not_found', 'There is nothing at this address.'));
    return;
  }
  if (status >= 400 && status < 500) {
    const message =
      err?.type === 'entity.parse.failed'
        ? 'The request body is not valid JSON.'
        : err?.type === 'entity.too.large'
          ? 'The request body is too large.'
          : 'The request could not be understood.';
    res.status(status).json(body(err?.type === 'entity.too.large' ? 'too_large' : 'bad_request', message));
    return;
  }
  const storageProblem = storageFailure(err);
  if (storageProblem) {
    req.log?.error({ err }, 'media storage failed');
    res.status(storageProblem.status).json(body(storageProblem.code, storageProblem.message));
    return;
  }
  if (isDatabaseUnavailable(err)) {
    req.log?.warn({ err }, 'database unavailable');
    res.set('Retry-After', '5');
    res.status(503).json(body('database_unavailable', 'The database is not answering just now, so nothing was read or saved. Try again in a few seconds.'));
    return;
  }
  req.log?.error({ err }, 'unhandled error');
  res.status(500).json(body('internal', 'Something went wrong on our side. Try again; if it keeps happening, tell the site admin.'));
};
