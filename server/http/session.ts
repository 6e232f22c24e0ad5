import type { RequestHandler } from 'express';
import session from 'express-session';
import connectPgSimple from 'connect-pg-simple';
import type pg from 'pg';
import type { Config } from '../config';

/** Name of the session cookie. */
export const sessionCookieName = 'benchproof.sid';

declare module 'express-session' {
  interface SessionData {
    /** When the person signed in, ms since the epoch: the start of the absolute timeout. */
    signedInAt?: number;
    /** The last private request, ms since the epoch (to the minute): what the idle timeout counts from. */
    lastSeenAt?: number;
  }
}

/**
 * Sessions in PostgreSQL (table "session", made by the first migration), so they survive a
 * restart. HttpOnly, SameSite=Lax, and Secure whenever the request came over HTTPS. Two limits
 * (OWASP ASVS V7.3.1, V7.3.2): a session with no request for `sessionIdleMs` ends (the cookie and
 * the stored row expire that long after the last request), and one older than `sessionMaxMs`
 * since sign-in ends however busy it is (`sessionLimits`).
 */
export function sessionMiddleware(config: Config, pool: pg.Pool) {
  const PgStore = connectPgSimple(session);
  return session({
    name: sessionCookieName,
    secret: config.sessionSecret,
    store: new PgStore({
      pool,
      tableName: 'session',
      createTableIfMissing: false,
      // Pruning is a timer; tests build many apps and should not leave timers behind.
      pruneSessionInterval: config.env === 'test' ? false : 15 * 60,
    }),
    resave: false,
    saveUninitialized: false,
    // Not express-session's rolling: it would send the cookie with public, cacheable answers too.
    rolling: false,
    proxy: config.trustProxy,
    cookie: {
      httpOnly: true,
      sameSite: 'lax',
      secure: config.cookieSecure,
      path: '/',
      maxAge: config.sessionIdleMs,
    },
  });
}

/** How often a busy session's deadline moves on (each move is a write of the session row). */
const IDLE_STEP_MS = 60_000;

/**
 * The session's limits, after the session and before passport reads it. A session older than
 * `maxMs` since sign-in is signed out. The idle deadline moves on with private requests only (not
 * `/api/public`, feeds, media or the built client), at most once a minute: the session is marked
 * changed, so express-session stores it with a new expiry and sends the cookie again, and a
 * public answer that a shared cache may keep never carries a cookie.
 */
export function sessionLimits(maxMs: number, now: () => number = Date.now): RequestHandler {
  return (req, _res, next) => {
    const s = req.session as (typeof req.session & { passport?: { user?: unknown } }) | undefined;
    if (!s?.passport?.user) return next();
    const at = now();
    if (s.signedInAt !== undefined && at - s.signedInAt > maxMs) {
      // Signed out, not destroyed: passport still finds a session object, with nobody in it.
      delete s.passport;
      delete s.signedInAt;
      delete s.lastSeenAt;
      return next();
    }
    const privatePath = req.path.startsWith('/api/') && !req.path.startsWith('/api/public/') || req.path.startsWith('/auth/');
    if (privatePath && (s.lastSeenAt === undefined || at - s.lastSeenAt >= IDLE_STEP_MS)) s.lastSeenAt = at;
    next();
  };
}
