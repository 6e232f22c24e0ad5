import type { RequestHandler } from 'express';
import type { Role } from '@shared/users/user.schema';
import { forbidden, unauthorized } from './errors';

declare global {
  // eslint-disable-next-line @typescript-eslint/no-namespace
  namespace Express {
    // Passport puts the signed-in account here.
    // eslint-disable-next-line @typescript-eslint/no-empty-object-type
    interface User extends InstanceType<typeof import('../features/users/user.model').User> {}
  }
}

const declared = Symbol('benchproof.access');
function mark(handler: RequestHandler): RequestHandler {
  (handler as unknown as Record<symbol, boolean>)[declared] = true;
  return handler;
}

/**
 * The one authorization mechanism. Every route declares who may call it; routes that declare
 * nothing are refused by `denyUndeclared`, so a forgotten check fails closed.
 */
export const access = {
  /** Anyone, signed in or not. */
  public: mark((_req, _res, next) => next()),
  /** Any signed-in account. */
  signedIn: mark((req, _res, next) => (req.user ? next() : next(unauthorized()))),
  /** Signed in with one of these roles. Admins pass every role check. */
  role: (...allowed: Role[]) =>
    mark((req, _res, next) => {
      if (!req.user) return next(unauthorized());
      if (req.user.role === 'admin' || allowed.includes(req.user.role)) return next();
      next(forbidden());
    }),
};

/** True when a handler is one of the access checks above. */
export function isAccessCheck(handler: unknown): boolean {
  return typeof handler === 'function' && Boolean((handler as unknown as Record<symbol, boolean>)[declared]);
}
