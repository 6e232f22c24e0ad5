import type { ErrorRequestHandler, RequestHandler } from 'express';
import { ZodError } from 'zod';
import type { ErrorBody } from '@shared/http/error.schema';
import { AppError, notFound } from './errors';

/** Headers a media response may have set before it failed; the JSON error must not carry them. */
const mediaHeaders = ['Content-Type', 'Content-Disposition', 'ETag', 'Last-Modified', 'Accept-Ranges'];

function body(code: string, message: string, details: ErrorBody['error']['details'] = []): ErrorBody {
  return { error: { code, message, details } };
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
  req.log?.error({ err }, 'unhandled error');
  res.status(500).json(body('internal', 'Something went wrong on our side. Try again; if it keeps happening, tell the site admin.'));
};
