import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { listRoutes } from '../../../server/http/routes';
import { csrfToken, signIn, startTestApp, type TestApp } from '../../support/test-app';

/*
 * Request forgery and error bodies over every route the app mounts (from listRoutes(), so a new
 * route is covered without editing this file).
 *
 * OWASP ASVS 5.0.0 (section numbers checked against OWASP/ASVS 5.0/en/0x12-V3-Web-Frontend-Security.md):
 *  - V3.5.1: CORS-safelisted requests to sensitive functionality are checked to originate from
 *    the application, here with the synchroniser token: every state-changing route refuses a
 *    request without it, or with another session's, before it does anything.
 *  - V3.5.3: sensitive functionality uses POST/PUT/PATCH/DELETE: no GET route changes state
 *    (the matrix's effect checks cover the GETs; here: every state-changing route is one of those verbs).
 *  - V3.3.2 / V3.3.4: the session cookie is SameSite and HttpOnly.
 * And ASVS 5.0.0 V16.5.1 (generic error messages, no stack traces or queries): a hostile body sent
 * to every route never brings back a stack trace, SQL or a file path.
 */

/** Exempt on purpose: the public calculator changes nothing; one-click unsubscribe carries a signed token (RFC 8058). */
const EXEMPT = new Set(['POST /api/calc', 'POST /api/unsubscribe']);
const stateChanging = () =>
  [...new Set(listRoutes(t.app).filter((r) => ['POST', 'PUT', 'PATCH', 'DELETE'].includes(r.method)).map((r) => `${r.method} ${r.path}`))].sort();
const fill = (p: string) => p.replace(/:(\w+)/g, '1');

// Made at load time, so its routes are there before the tests are listed.
const t: TestApp = await startTestApp();
let agent: Awaited<ReturnType<typeof signIn>>;
let otherToken: string;

beforeAll(async () => {
  agent = await signIn(t, 'demo-builder');
  otherToken = await csrfToken(await signIn(t, 'demo-builder-2'));
});
afterAll(async () => {
  await t?.close();
});

describe('request forgery (ASVS 5.0.0 V3.5.1)', () => {
  it('covers a real set of routes', () => {
    expect(stateChanging().length).toBeGreaterThan(30);
    for (const key of EXEMPT) expect(stateChanging()).toContain(key);
  });

  it.each(stateChanging().filter((k) => !EXEMPT.has(k)))('%s refuses a request without the token, and one with another session’s token', async (key) => {
    const [method, routePath] = key.split(' ') as [string, string];
    const verb = method.toLowerCase() as 'post' | 'put' | 'patch' | 'delete';
    const missing = await agent[verb](fill(routePath)).send({});
    expect(missing.status).toBe(403);
    expect(missing.body.error.code).toBe('csrf_invalid');
    const foreign = await agent[verb](fill(routePath)).set('x-csrf-token', otherToken).send({});
    expect(foreign.status).toBe(403);
    expect(foreign.body.error.code).toBe('csrf_invalid');
  });
});

describe('the session cookie (ASVS 5.0.0 V3.3.2, V3.3.4)', () => {
  it('is HttpOnly and SameSite=Lax', async () => {
    const anon = request.agent(t.app);
    const res = await anon.get('/api/csrf-token').expect(200);
    const cookie = (res.headers['set-cookie'] as unknown as string[]).find((c) => c.startsWith('benchproof.sid='))!;
    expect(cookie).toMatch(/HttpOnly/i);
    expect(cookie).toMatch(/SameSite=Lax/i);
  });
});

describe('error bodies (ASVS 5.0.0 V16.5.1)', () => {
  const hostile = { "'; DROP TABLE users; --": 1, lockVersion: 'x', __proto__: { polluted: true }, body: '\u0000'.repeat(10), title: { $gt: '' } };
  const leaks = [/\bat [\w.<>]+ \(/, /node_modules/, /\/work\//, /SELECT |INSERT |UPDATE \w+ SET|SequelizeDatabaseError|syntax error at/i];

  it.each([...new Set(listRoutes(t.app).map((r) => `${r.method} ${r.path}`))].sort())('%s answers a hostile request without internals', async (key) => {
    const [method, routePath] = key.split(' ') as [string, string];
    const verb = method.toLowerCase() as 'get' | 'head' | 'post' | 'put' | 'patch' | 'delete';
    const token = await csrfToken(agent);
    const url = `${routePath.replace(/:(\w+)/g, "1'%20OR%201=1")}?t=abc&limit=-1&after=%27%3B--&q=%25%27`;
    let req = agent[verb](url);
    if (verb !== 'get' && verb !== 'head') req = req.set('x-csrf-token', token);
    // GET and HEAD carry no body; the hostile part is in the path and the query.
    const res = await (verb === 'get' || verb === 'head' ? req : req.send(hostile));
    expect(res.status, `${key} answered ${res.status}`).toBeLessThan(500);
    const text = res.text ?? '';
    for (const leak of leaks) expect(text, `${key} leaked ${leak}`).not.toMatch(leak);
  });
});
