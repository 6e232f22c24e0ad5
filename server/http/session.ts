import session from 'express-session';
import connectPgSimple from 'connect-pg-simple';
import type pg from 'pg';
import type { Config } from '../config';

/** Name of the session cookie. */
export const sessionCookieName = 'benchproof.sid';

/**
 * Sessions in PostgreSQL (table "session", made by the first migration), so they survive a
 * restart. HttpOnly, SameSite=Lax, and Secure whenever the request came over HTTPS.
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
    rolling: false,
    proxy: config.trustProxy,
    cookie: {
      httpOnly: true,
      sameSite: 'lax',
      secure: config.cookieSecure,
      path: '/',
      maxAge: 30 * 24 * 60 * 60 * 1000,
    },
  });
}
