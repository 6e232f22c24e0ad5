import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { csrfToken, signIn, startTestApp, type TestApp } from '../../support/test-app';

/*
 * Anti-automation on sign-in and uploads, with low limits set for the test (the calculator's and
 * the questions' limits are tested beside their features). OWASP ASVS 5.0.0 V2.4.1 (anti-automation
 * controls against excessive calls; checked against OWASP/ASVS 5.0/en/0x11-V2-Validation-and-Business-Logic.md).
 * A refusal is our error body (429, rate_limited) with the standard RateLimit headers.
 */

let t: TestApp;
beforeAll(async () => {
  t = await startTestApp({ SIGN_IN_RATE_LIMIT: '3', UPLOAD_RATE_LIMIT: '2' });
});
afterAll(async () => {
  await t?.close();
});

describe('rate limits', () => {
  it('refuses the fourth sign-in start in a minute from one address with 429 and our error body', async () => {
    const agent = request.agent(t.app);
    for (let i = 0; i < 3; i += 1) await agent.get('/auth/github?login=demo-follower').expect(302);
    const refused = await agent.get('/auth/github?login=demo-follower');
    expect(refused.status).toBe(429);
    expect(refused.body.error.code).toBe('rate_limited');
    expect(refused.body.error.message).toMatch(/sign-in/);
    expect(refused.headers['ratelimit-policy'] ?? refused.headers.ratelimit).toBeDefined();
  });

  it('refuses the third upload in a minute with 429 before reading the file', async () => {
    // Limits are per app and address, and this file's first app has spent its sign-ins: a second app signs in afresh.
    const fresh = await startTestApp({ UPLOAD_RATE_LIMIT: '2' });
    try {
      const builder = await signIn(fresh, 'demo-builder');
      const token = await csrfToken(builder);
      const build = await builder.post('/api/builds').set('x-csrf-token', token).send({ title: 'Rate limit build (test)' }).expect(201);
      const upload = () =>
        builder
          .post(`/api/builds/${build.body.build.id}/clips`)
          .set('x-csrf-token', token)
          .attach('file', Buffer.from('not a video at all'), 'not-a-video.mp4');
      expect((await upload()).status).toBe(415);
      expect((await upload()).status).toBe(415);
      const refused = await upload();
      expect(refused.status).toBe(429);
      expect(refused.body.error.code).toBe('rate_limited');
      expect(refused.body.error.message).toMatch(/uploads/);
    } finally {
      await fresh.close();
    }
  });
});
