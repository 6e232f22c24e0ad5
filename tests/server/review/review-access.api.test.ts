import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { outboxResponseSchema } from '@shared/mail/outbox.schema';
import { Follow } from '../../../server/features/follows/follow.model';
import { signUnsubscribe } from '../../../server/features/follows/unsubscribe-token';
import { ReviewClaim } from '../../../server/features/review/review.model';
import { makeTestClip } from '../../support/clips';
import { actors, sessionFor, type Actor, type Session } from '../../support/matrix-fixtures';
import { checkSubject, fixtureBody, lockVersionOf, makeReviewFixture, move, type ReviewFixture } from '../../support/review-fixtures';
import { startTestApp, type TestApp } from '../../support/test-app';

/*
 * Who may call each review route, for the six callers of the authorization matrix
 * (tests/server/security/authorization-matrix.test.ts), each with a well-formed request on the
 * owner's story. 401 not signed in; 403 the role may not; 404 not theirs to see.
 */

let t: TestApp;
let work: string;
let f: ReviewFixture;
let flagId: number;
let draftId: number;
const s = {} as Record<Actor, Session>;

type Row = Record<Actor, number>;
// prettier-ignore
const EXPECTED: Record<string, Row> = {
  'GET /api/review/queue':                          { anonymous: 401, follower: 403, owner: 403, otherBuilder: 403, moderator: 200, admin: 200 },
  'GET /api/review/stories/:storyId':               { anonymous: 401, follower: 404, owner: 200, otherBuilder: 404, moderator: 200, admin: 200 },
  'GET /api/stories/:storyId/audit':                { anonymous: 401, follower: 403, owner: 403, otherBuilder: 403, moderator: 200, admin: 200 },
  'GET /api/review/audit':                          { anonymous: 401, follower: 403, owner: 403, otherBuilder: 403, moderator: 200, admin: 200 },
  'GET /api/admin/outbox':                          { anonymous: 401, follower: 403, owner: 403, otherBuilder: 403, moderator: 403, admin: 200 },
  'POST /api/review/stories/:storyId/claim':        { anonymous: 401, follower: 403, owner: 403, otherBuilder: 403, moderator: 200, admin: 200 },
  'DELETE /api/review/stories/:storyId/claim':      { anonymous: 401, follower: 403, owner: 403, otherBuilder: 403, moderator: 204, admin: 204 },
  'POST /api/review/checks':                        { anonymous: 401, follower: 403, owner: 403, otherBuilder: 403, moderator: 201, admin: 201 },
  'POST /api/review/checks/:checkId/answers':       { anonymous: 401, follower: 403, owner: 201, otherBuilder: 404, moderator: 403, admin: 403 },
  'POST /api/stories/:storyId/transitions':         { anonymous: 401, follower: 404, owner: 200, otherBuilder: 404, moderator: 403, admin: 403 },
  'GET /api/unsubscribe':                           { anonymous: 200, follower: 200, owner: 200, otherBuilder: 200, moderator: 200, admin: 200 },
  'POST /api/unsubscribe':                          { anonymous: 200, follower: 200, owner: 200, otherBuilder: 200, moderator: 200, admin: 200 },
};

const write = (who: Actor, verb: 'post' | 'delete', url: string, body?: object) => {
  const req = s[who].agent[verb](url).set('x-csrf-token', s[who].token);
  return body === undefined ? req : req.send(body);
};

beforeAll(async () => {
  work = fs.mkdtempSync(path.join(os.tmpdir(), 'benchproof-review-access-'));
  const clipFile = await makeTestClip({ seconds: 2, format: 'mp4-h264', dir: work });
  t = await startTestApp({}, { jobs: true });
  for (const actor of actors) s[actor] = await sessionFor(t, actor);
  f = await makeReviewFixture(s.owner, { clipFile });
  await move(s.owner, f.story.id, 'submit');
  await write('moderator', 'post', `/api/review/stories/${f.story.id}/claim`).expect(200);
  flagId = (await checkSubject(s.moderator, f.story.id, 'reading', f.readings.height.id, 'flagged', 'the thimble is hidden')).body.check.id;
  await write('moderator', 'delete', `/api/review/stories/${f.story.id}/claim`).expect(204);
  draftId = (await write('owner', 'post', `/api/builds/${f.buildId}/stories`, { title: 'A draft to send (test)', body: fixtureBody() }).expect(201)).body.story.id;
}, 180_000);

afterAll(async () => {
  await t?.close();
  if (work) fs.rmSync(work, { recursive: true, force: true });
});

/** One well-formed request per route, as `who`; what it answers. */
const attempts: Record<keyof typeof EXPECTED, (who: Actor) => Promise<number>> = {
  'GET /api/review/queue': async (who) => (await s[who].agent.get('/api/review/queue')).status,
  'GET /api/review/stories/:storyId': async (who) => (await s[who].agent.get(`/api/review/stories/${f.story.id}`)).status,
  'GET /api/stories/:storyId/audit': async (who) => (await s[who].agent.get(`/api/stories/${f.story.id}/audit`)).status,
  'GET /api/review/audit': async (who) => (await s[who].agent.get('/api/review/audit')).status,
  'GET /api/admin/outbox': async (who) => (await s[who].agent.get('/api/admin/outbox')).status,
  'POST /api/review/stories/:storyId/claim': async (who) => {
    const status = (await write(who, 'post', `/api/review/stories/${f.story.id}/claim`)).status;
    await ReviewClaim.destroy({ where: { storyId: f.story.id } });
    return status;
  },
  'DELETE /api/review/stories/:storyId/claim': async (who) => {
    await ReviewClaim.create({ storyId: f.story.id, moderatorId: (await s.moderator.agent.get('/api/me')).body.user.id, expiresAt: new Date(Date.now() + 60_000) });
    // Only the holder or an admin lets go; the moderator holds it here.
    const status = (await write(who, 'delete', `/api/review/stories/${f.story.id}/claim`)).status;
    await ReviewClaim.destroy({ where: { storyId: f.story.id } });
    return status;
  },
  'POST /api/review/checks': async (who) => {
    // A reviewer checks while holding the claim; the others are refused before that matters.
    if (who === 'moderator' || who === 'admin') await write(who, 'post', `/api/review/stories/${f.story.id}/claim`).expect(200);
    const status = (await checkSubject(s[who], f.story.id, 'reading', f.readings.depth.id)).status;
    await ReviewClaim.destroy({ where: { storyId: f.story.id } });
    return status;
  },
  'POST /api/review/checks/:checkId/answers': async (who) => (await write(who, 'post', `/api/review/checks/${flagId}/answers`, { body: `An answer from ${who}.` })).status,
  'POST /api/stories/:storyId/transitions': async (who) => (await move(s[who], draftId, 'submit', { lockVersion: await lockVersionOf(s.owner, draftId) })).status,
  'GET /api/unsubscribe': async () => (await request(t.app).get(`/api/unsubscribe?token=${encodeURIComponent(await token())}`)).status,
  'POST /api/unsubscribe': async (who) => (await write(who, 'post', `/api/unsubscribe?token=${encodeURIComponent(await token())}`)).status,
};

async function token() {
  const [followerId, builderId] = [(await s.follower.agent.get('/api/me')).body.user.id as number, (await s.owner.agent.get('/api/me')).body.user.id as number];
  await Follow.findOrCreate({ where: { followerId, builderId } });
  return signUnsubscribe(t.config.sessionSecret, followerId, builderId);
}

describe('who may call the review routes', () => {
  for (const route of Object.keys(EXPECTED)) {
    it(route, async () => {
      // The owner goes last, so a move that succeeds for them is made after everyone else's try.
      const order: Actor[] = ['anonymous', 'follower', 'otherBuilder', 'moderator', 'admin', 'owner'];
      const got = {} as Row;
      for (const who of order) got[who] = await attempts[route]!(who);
      expect(got).toEqual(EXPECTED[route]);
    });
  }

  it('the admin outbox lists what the capture server received', async () => {
    const res = await s.admin.agent.get('/api/admin/outbox').expect(200);
    const body = outboxResponseSchema.parse(res.body);
    expect(body.capturing).toBe(true);
    expect(res.headers['cache-control']).toBe('no-store');
  });
});
