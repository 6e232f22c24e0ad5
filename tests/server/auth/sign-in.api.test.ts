import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import request from 'supertest';
import { errorBodySchema } from '@shared/http/error.schema';
import { meResponseSchema } from '@shared/users/user.schema';
import { sessionCookieName } from '../../../server/http/session';
import { upsertFromProvider } from '../../../server/features/users/users.service';
import { csrfToken, freshAccount, signIn, startTestApp, type TestApp } from '../../support/test-app';

let t: TestApp;
beforeAll(async () => {
  t = await startTestApp();
});
afterAll(() => t.close());

const sidOf = (setCookie: string[] | string | undefined) =>
  ([] as string[]).concat(setCookie ?? []).find((c) => c.startsWith(`${sessionCookieName}=`));

describe('signing in through the fake GitHub provider', () => {
  it.each([
    ['demo-builder', 'builder', 'Ines Calloway'],
    ['demo-builder-2', 'builder', 'Tomasz Reyne'],
    ['demo-moderator', 'moderator', 'Dagny Orlov'],
    ['demo-follower', 'follower', 'Sam Okafor'],
    ['demo-admin', 'admin', 'Priya Natarajan'],
  ])('when %s signs in, /api/me shows the account with role %s', async (login, role, name) => {
    const agent = await signIn(t, login);
    const res = await agent.get('/api/me').expect(200);
    const me = meResponseSchema.parse(res.body);
    expect(me.user).toMatchObject({ login, role, displayName: name });
  });

  it('when nobody is signed in, /api/me answers 401 in the error contract', async () => {
    const res = await request(t.app).get('/api/me').expect(401);
    expect(errorBodySchema.parse(res.body).error.code).toBe('unauthorized');
  });

  it('when a never-seen person signs in, a follower account is made for them', async () => {
    const account = freshAccount(t);
    const agent = await signIn(t, account.login);
    const me = meResponseSchema.parse((await agent.get('/api/me').expect(200)).body);
    expect(me.user).toMatchObject({ login: account.login, role: 'follower', email: account.email });
  });

  it('the authorize redirect carries a state, and the fake honours the login parameter', async () => {
    const res = await request(t.app).get('/auth/github?login=demo-follower').expect(302);
    const url = new URL(res.headers.location!);
    expect(url.origin).toBe(t.fake.url());
    expect(url.pathname).toBe('/login/oauth/authorize');
    expect(url.searchParams.get('login')).toBe('demo-follower');
    expect(url.searchParams.get('state')).toMatch(/.{16,}/);
    expect(url.searchParams.get('scope')).toBe('user:email');
  });

  it('without a login the fake shows its chooser page listing the demo accounts', async () => {
    const res = await request(t.app).get('/auth/github').expect(302);
    const page = await fetch(res.headers.location!);
    const html = await page.text();
    expect(page.status).toBe(200);
    for (const login of ['demo-builder', 'demo-moderator', 'demo-follower', 'demo-admin']) expect(html).toContain(login);
  });

  it('a callback whose state does not match the session is refused and signs nobody in', async () => {
    const agent = request.agent(t.app);
    const start = await agent.get('/auth/github?login=demo-admin').expect(302);
    const authorize = await fetch(start.headers.location!, { redirect: 'manual' });
    const callback = new URL(authorize.headers.get('location')!);
    callback.searchParams.set('state', 'forged-state-value');
    const done = await agent.get(callback.pathname + callback.search).expect(302);
    expect(done.headers.location).toBe('/sign-in?error=state_mismatch');
    await agent.get('/api/me').expect(401);
  });

  it('a callback replayed in another browser (no state in its session) is refused', async () => {
    const start = await request.agent(t.app).get('/auth/github?login=demo-admin').expect(302);
    const authorize = await fetch(start.headers.location!, { redirect: 'manual' });
    const callback = new URL(authorize.headers.get('location')!);
    const attacker = request.agent(t.app);
    const done = await attacker.get(callback.pathname + callback.search).expect(302);
    expect(done.headers.location).toMatch(/^\/sign-in\?error=/);
    await attacker.get('/api/me').expect(401);
  });

  it('when the person cancels at the provider, they come back to the sign-in page with a reason', async () => {
    const agent = request.agent(t.app);
    const start = await agent.get('/auth/github').expect(302);
    const deny = new URL(start.headers.location!);
    deny.searchParams.set('deny', '1');
    const authorize = await fetch(deny, { redirect: 'manual' });
    const callback = new URL(authorize.headers.get('location')!);
    const done = await agent.get(callback.pathname + callback.search).expect(302);
    expect(done.headers.location).toBe('/sign-in?error=cancelled');
  });

  it('returnTo brings the person back to the page they came from, and only to this site', async () => {
    for (const [asked, expected] of [
      ['/admin/users', '/admin/users'],
      ['//evil.example/x', '/'],
      ['https://evil.example/', '/'],
    ] as const) {
      const agent = request.agent(t.app);
      const start = await agent.get(`/auth/github?login=demo-admin&returnTo=${encodeURIComponent(asked)}`).expect(302);
      const authorize = await fetch(start.headers.location!, { redirect: 'manual' });
      const callback = new URL(authorize.headers.get('location')!);
      const done = await agent.get(callback.pathname + callback.search).expect(302);
      expect(done.headers.location).toBe(expected);
    }
  });
});

describe('demo accounts and the real GitHub', () => {
  it('with the real provider, a GitHub id that matches an invented demo account is not signed in to it', async () => {
    const profile = { githubId: '910005', login: 'someone-real', displayName: 'Someone', email: null, avatarUrl: null };
    await expect(upsertFromProvider(profile, { demoAccounts: false })).rejects.toThrow(/invented demo account/);
    // With the local fake it is the demo admin, as intended.
    expect((await upsertFromProvider({ ...profile, login: 'demo-admin' }, { demoAccounts: true })).role).toBe('admin');
  });
});

describe('a login that moved on GitHub', () => {
  it('signs in the person GitHub now gives a login to, and the account that held it keeps its id until its owner returns', async () => {
    // Invented ids and logins. Accounts are keyed by GitHub id; the login is only today's name for it.
    const first = await upsertFromProvider({ githubId: '770001', login: 'moved-login', displayName: 'First (invented)', email: null, avatarUrl: null }, { demoAccounts: true });
    // First renames on GitHub and does not sign in; GitHub gives "moved-login" to someone else.
    const second = await upsertFromProvider({ githubId: '770002', login: 'moved-login', displayName: 'Second (invented)', email: null, avatarUrl: null }, { demoAccounts: true });
    expect(second.id).not.toBe(first.id);
    expect(second.login).toBe('moved-login');
    await first.reload();
    expect(first.login).toBe('gh-770001--moved');
    // When First signs in again under the new name, the account takes it.
    const back = await upsertFromProvider({ githubId: '770001', login: 'new-name-770001', displayName: 'First (invented)', email: null, avatarUrl: null }, { demoAccounts: true });
    expect(back.id).toBe(first.id);
    expect(back.login).toBe('new-name-770001');
  });
});

describe('the session', () => {
  it('gets a new id at sign-in, and its cookie is HttpOnly and SameSite=Lax', async () => {
    const agent = request.agent(t.app);
    const start = await agent.get('/auth/github?login=demo-follower').expect(302);
    const before = sidOf(start.headers['set-cookie']);
    expect(before).toBeDefined();
    const authorize = await fetch(start.headers.location!, { redirect: 'manual' });
    const callback = new URL(authorize.headers.get('location')!);
    const done = await agent.get(callback.pathname + callback.search).expect(302);
    const after = sidOf(done.headers['set-cookie']);
    expect(after).toBeDefined();
    expect(after!.split(';')[0]).not.toBe(before!.split(';')[0]);
    expect(after).toMatch(/HttpOnly/i);
    expect(after).toMatch(/SameSite=Lax/i);
    expect(after).not.toMatch(/;\s*Secure/i); // plain http on loopback
  });

  it('is marked Secure when the request came over HTTPS through a trusted proxy', async () => {
    const secure = await startTestApp({ TRUST_PROXY: '1' });
    try {
      const res = await request(secure.app).get('/auth/github?login=demo-follower').set('X-Forwarded-Proto', 'https').expect(302);
      expect(sidOf(res.headers['set-cookie'])).toMatch(/;\s*Secure/i);
    } finally {
      await secure.close();
    }
  });

  it('survives a server restart, because it is stored in PostgreSQL', async () => {
    const agent = await signIn(t, 'demo-moderator');
    const cookie = (await agent.get('/api/csrf-token')).request.cookies;
    const second = await startTestApp();
    try {
      const res = await request(second.app).get('/api/me').set('Cookie', cookie).expect(200);
      expect(res.body.user.login).toBe('demo-moderator');
    } finally {
      await second.close();
    }
  });

  it('sign-out destroys it: the old cookie no longer signs anyone in', async () => {
    const agent = await signIn(t, 'demo-builder');
    const cookie = (await agent.get('/api/me').expect(200)).request.cookies;
    const token = await csrfToken(agent);
    await agent.post('/auth/sign-out').set('x-csrf-token', token).expect(204);
    await agent.get('/api/me').expect(401);
    await request(t.app).get('/api/me').set('Cookie', cookie).expect(401);
  });

  it('sign-out without the CSRF token is refused and the person stays signed in', async () => {
    const agent = await signIn(t, 'demo-builder');
    const res = await agent.post('/auth/sign-out').expect(403);
    expect(errorBodySchema.parse(res.body).error.code).toBe('csrf_invalid');
    await agent.get('/api/me').expect(200);
  });
});
