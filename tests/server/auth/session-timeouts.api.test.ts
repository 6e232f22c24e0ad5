import { QueryTypes } from 'sequelize';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { sessionCookieName } from '../../../server/http/session';
import { freshAccount, signIn, startTestApp, type TestApp } from '../../support/test-app';

/*
 * Sessions end after a spell without requests (idle timeout) and, however busy, a fixed time after
 * sign-in (absolute timeout): OWASP ASVS 5.0 V7.3.1 and V7.3.2. The clock is moved by editing the
 * stored session, so nothing here waits.
 */

let t: TestApp;
beforeAll(async () => {
  t = await startTestApp({ SESSION_IDLE_HOURS: '2', SESSION_MAX_DAYS: '30' });
});
afterAll(() => t.close());

const sidOf = (setCookie: string[] | string | undefined) =>
  ([] as string[]).concat(setCookie ?? []).find((c) => c.startsWith(`${sessionCookieName}=`));

async function storedSession(agent: Awaited<ReturnType<typeof signIn>>) {
  const res = await agent.get('/api/me').expect(200);
  const id = (res.body as { user: { id: number } }).user.id;
  const rows = await t.sequelize.query<{ sid: string; expire: Date; sess: { signedInAt?: number } }>(
    `SELECT sid, expire, sess FROM session WHERE (sess->'passport'->>'user')::int = :id ORDER BY expire DESC LIMIT 1`,
    { type: QueryTypes.SELECT, replacements: { id } },
  );
  return rows[0]!;
}

describe('how long a session lasts', () => {
  it('each request moves the idle deadline on, to the idle timeout from now', async () => {
    const agent = await signIn(t, freshAccount(t, 'idle-reader').login);
    const res = await agent.get('/api/me').expect(200);
    const cookie = sidOf(res.headers['set-cookie']);
    expect(cookie, 'a rolling session sends its cookie again').toBeDefined();
    const expires = Date.parse(/Expires=([^;]+)/.exec(cookie!)![1]!);
    // SESSION_IDLE_HOURS = 2 for this app.
    expect(Math.abs(expires - (Date.now() + 2 * 3600_000))).toBeLessThan(60_000);
    const stored = await storedSession(agent);
    expect(Math.abs(new Date(stored.expire).getTime() - (Date.now() + 2 * 3600_000))).toBeLessThan(60_000);
  });

  it('a public answer, which a shared cache may keep, never carries the session cookie', async () => {
    const agent = await signIn(t, freshAccount(t, 'public-reader').login);
    await agent.get('/api/me').expect(200);
    const stored = await storedSession(agent);
    // Even with the deadline due to move, a public request leaves the session alone.
    await t.sequelize.query(`UPDATE session SET sess = jsonb_set(sess::jsonb, '{lastSeenAt}', to_jsonb(:at::bigint))::json WHERE sid = :sid`, {
      replacements: { sid: stored.sid, at: Date.now() - 10 * 60_000 },
    });
    const res = await agent.get('/api/public/stories').expect(200);
    expect(sidOf(res.headers['set-cookie'])).toBeUndefined();
    // The next private request moves it on, and sends the cookie again.
    expect(sidOf((await agent.get('/api/me').expect(200)).headers['set-cookie'])).toBeDefined();
  });

  it('a session left idle past its deadline is signed out', async () => {
    const agent = await signIn(t, freshAccount(t, 'gone-idle').login);
    const stored = await storedSession(agent);
    await t.sequelize.query(`UPDATE session SET expire = now() - interval '1 second' WHERE sid = :sid`, { replacements: { sid: stored.sid } });
    await agent.get('/api/me').expect(401);
  });

  it('a session older than the absolute limit is signed out, however recently it was used', async () => {
    const agent = await signIn(t, freshAccount(t, 'long-session').login);
    const stored = await storedSession(agent);
    expect(stored.sess.signedInAt, 'the start is stamped on the first signed-in request').toBeGreaterThan(Date.now() - 60_000);
    const thirtyOneDaysAgo = Date.now() - 31 * 24 * 3600_000;
    await t.sequelize.query(`UPDATE session SET sess = jsonb_set(sess::jsonb, '{signedInAt}', to_jsonb(:at::bigint))::json WHERE sid = :sid`, {
      replacements: { sid: stored.sid, at: thirtyOneDaysAgo },
    });
    await agent.get('/api/me').expect(401);
  });
});
