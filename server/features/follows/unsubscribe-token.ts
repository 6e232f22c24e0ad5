import crypto from 'node:crypto';

/**
 * Signed one-click unsubscribe tokens: `<payload>.<signature>`, payload = base64url JSON
 * `{ f: followerId, b: builderId }`, signature = HMAC-SHA256 under a key derived from the
 * session secret (so no new secret to manage). Tampering with either half fails verification;
 * comparison is constant-time.
 */
function key(secret: string): Buffer {
  return crypto.createHmac('sha256', secret).update('benchproof unsubscribe v1').digest();
}

/** A one-click unsubscribe token for `followerId`'s mail about `builderId`. */
export function signUnsubscribe(secret: string, followerId: number, builderId: number): string {
  const payload = Buffer.from(JSON.stringify({ f: followerId, b: builderId })).toString('base64url');
  const signature = crypto.createHmac('sha256', key(secret)).update(payload).digest('base64url');
  return `${payload}.${signature}`;
}

/** The follower and builder a token names, or null when it is malformed or its signature is wrong. */
export function verifyUnsubscribe(secret: string, token: string): { followerId: number; builderId: number } | null {
  const [payload, signature, extra] = token.split('.');
  if (!payload || !signature || extra !== undefined || token.length > 300) return null;
  // Compared as text, not as decoded bytes: base64url decoding ignores the spare low bits of the
  // last character, so a token with that character changed would decode to the same signature.
  const expected = Buffer.from(crypto.createHmac('sha256', key(secret)).update(payload).digest('base64url'));
  const given = Buffer.from(signature);
  if (given.length !== expected.length || !crypto.timingSafeEqual(given, expected)) return null;
  try {
    const data = JSON.parse(Buffer.from(payload, 'base64url').toString('utf8')) as { f?: unknown; b?: unknown };
    if (!Number.isInteger(data.f) || !Number.isInteger(data.b)) return null;
    return { followerId: data.f as number, builderId: data.b as number };
  } catch {
    return null;
  }
}
