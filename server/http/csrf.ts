import { Router } from 'express';
import { csrfSync } from 'csrf-sync';
import { csrfHeaderName } from '@shared/http/csrf';
import { access } from './authorize';

/**
 * Exempt paths: the public calculator (changes nothing) and one-click unsubscribe (RFC 8058:
 * a mail client posts it without a session; the signed token in the URL is the authority).
 */
const exempt = new Set(['/api/calc', '/api/unsubscribe']);

/**
 * Synchroniser-token CSRF protection (csrf-sync): the token lives in the session, the client
 * reads it from GET /api/csrf-token and sends it in the x-csrf-token header on every
 * POST/PUT/PATCH/DELETE. SameSite=Lax cookies are a second layer, not the only one.
 */
export function csrfProtection() {
  const { csrfSynchronisedProtection, generateToken } = csrfSync({
    getTokenFromRequest: (req) => {
      const value = req.headers[csrfHeaderName];
      return Array.isArray(value) ? value[0] : value;
    },
    skipCsrfProtection: (req) => exempt.has(req.path),
    errorConfig: { statusCode: 403, code: 'EBADCSRFTOKEN', message: 'invalid csrf token' },
  });

  const tokenRouter = Router();
  tokenRouter.get('/', access.public, (req, res) => {
    res.set('Cache-Control', 'no-store');
    res.json({ token: generateToken(req) });
  });

  return { protect: csrfSynchronisedProtection, tokenRouter };
}
