import { Router, type RequestHandler } from 'express';
import type { createPassport } from './auth.passport';
import { z } from 'zod';
import { access } from '../../http/authorize';
import { unauthorized } from '../../http/errors';
import { limiter } from '../../http/rate-limit';
import { validQuery, validate } from '../../http/validate';

declare module 'express-session' {
  interface SessionData {
    returnTo?: string;
  }
}

/** Only same-site paths, so a sign-in link cannot bounce a person to another site. */
const returnToSchema = z
  .string()
  .max(500)
  .regex(/^\/(?![/\\])[^\s]*$/, 'must be a path on this site')
  .optional()
  .catch(undefined);

const startQuerySchema = z.object({
  login: z.string().regex(/^[A-Za-z0-9-]{1,39}$/).optional().catch(undefined),
  returnTo: returnToSchema,
});

/** Sign-in and sign-out, mounted at /auth. */
export function authRouter(passport: ReturnType<typeof createPassport>, opts: { signInLimit: number }) {
  const router = Router();
  const signInLimiter = limiter({
    windowMs: 60_000,
    limit: opts.signInLimit,
    message: 'Too many sign-in attempts from here. Wait a minute and try again.',
  });

  router.get('/github', access.public, signInLimiter, validate({ query: startQuerySchema }), (req, res, next) => {
    const q = validQuery<z.infer<typeof startQuerySchema>>(res);
    req.session.returnTo = q.returnTo;
    passport.authenticate('github', { login: q.login } as never)(req, res, next);
  });

  router.get('/github/callback', access.public, signInLimiter, finishSignIn(passport));

  router.post('/sign-out', access.public, (req, res, next) => {
    req.logout((err) => {
      if (err) return next(err);
      req.session.destroy((destroyErr) => {
        if (destroyErr) return next(destroyErr);
        res.clearCookie('benchproof.sid', { path: '/' });
        res.status(204).end();
      });
    });
  });

  return router;
}

function finishSignIn(passport: ReturnType<typeof createPassport>): RequestHandler {
  return (req, res, next) => {
    passport.authenticate('github', (err: unknown, user: Express.User | false, info: { message?: string } | undefined) => {
      if (err) {
        req.log.warn({ err }, 'sign-in failed at the provider');
        return res.redirect('/sign-in?error=github_unavailable');
      }
      if (!user) {
        const reason = req.query.error === 'access_denied' ? 'cancelled' : /state/i.test(info?.message ?? '') ? 'state_mismatch' : 'failed';
        return res.redirect(`/sign-in?error=${reason}`);
      }
      const returnTo = req.session.returnTo;
      // req.logIn gives the session a new id (passport >= 0.6) and drops what the old one held.
      req.logIn(user, (loginErr) => {
        if (loginErr) return next(loginErr);
        // The start of the absolute session timeout (server/http/session.ts).
        req.session.signedInAt = Date.now();
        req.log.info({ userId: user.id }, 'signed in');
        res.redirect(returnTo ?? '/');
      });
    })(req, res, next);
  };
}

/** GET /api/me: the signed-in user, or 401. */
export const meRouter = Router();
meRouter.get('/', access.public, (req, res) => {
  if (!req.user) throw unauthorized('You are not signed in.');
  res.json({ user: req.user.toDto() });
});
