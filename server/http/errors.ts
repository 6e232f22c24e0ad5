import type { ErrorCode } from '@shared/http/error-codes';
import type { ErrorDetail } from '@shared/http/error.schema';

/** An error a person can act on, carried to the error middleware with its HTTP status. */
export class AppError extends Error {
  constructor(
    readonly status: number,
    readonly code: ErrorCode,
    message: string,
    readonly details: ErrorDetail[] = [],
  ) {
    super(message);
    this.name = 'AppError';
  }
}

export const badRequest = (message: string, details: ErrorDetail[] = [], code: ErrorCode = 'bad_request') =>
  new AppError(400, code, message, details);
export const unauthorized = (message = 'Sign in to do this.') => new AppError(401, 'unauthorized', message);
export const forbidden = (message = 'Your account is not allowed to do this.') =>
  new AppError(403, 'forbidden', message);
export const notFound = (message = 'There is nothing at this address.') => new AppError(404, 'not_found', message);
export const conflict = (message: string, code: ErrorCode = 'conflict') => new AppError(409, code, message);
export const tooManyRequests = (message = 'Too many requests. Wait a minute and try again.') =>
  new AppError(429, 'rate_limited', message);
