import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { errorBodySchema } from '@shared/http/error.schema';
import { queueResponseSchema } from '@shared/review/review.schema';
import { storyResponseSchema } from '@shared/stories/story.schema';
import { AppError } from '../../../server/http/errors';
import { ReviewClaim } from '../../../server/features/review/review.model';
import { CLAIM_MINUTES, claimStory, type ReviewDeps } from '../../../server/features/review/review.service';
import { User } from '../../../server/features/users/user.model';
import { makeTestClip } from '../../support/clips';
import { sessionFor, type Session } from '../../support/matrix-fixtures';
import { checkSubject, fixtureBody, makeReviewFixture, move, sessionWithRole, type ReviewFixture } from '../../support/review-fixtures';
import { startTestApp, type TestApp } from '../../support/test-app';

let t: TestApp;
let work: string;
let owner: Session;
let moderator: Session;
let admin: Session;
let follower: Session;
let anonymous: Session;
let second: Session & { userId: number };
let f: ReviewFixture;
let laterStoryId: number;

const error = (res: { body: unknown }) => errorBodySchema.parse(res.body).error;
const claim = (s: Session, storyId: number) => s.agent.post(`/api/review/stories/${storyId}/claim`).set('x-csrf-token', s.token);
const release = (s: Session, storyId: number) => s.agent.delete(`/api/review/stories/${storyId}/claim`).set('x-csrf-token', s.token);

/** Every page of the queue, walked by its keyset, `limit` rows at a time. */
async function wholeQueue(s: Session, limit: number) {
  const items = [];
  let after: string | null = null;
  for (let page = 0; page < 1000; page += 1) {
    const res = await s.agent.get('/api/review/queue').query({ limit, ...(after && { after }) }).expect(200);
    const body = queueResponseSchema.parse(res.body);
    items.push(...body.items);
    after = body.nextAfter;
    if (!after) break;
  }
  return items;
}

beforeAll(async () => {
  work = fs.mkdtempSync(path.join(os.tmpdir(), 'benchproof-claims-'));
  const clipFile = await makeTestClip({ seconds: 2, format: 'mp4-h264', dir: work });
  t = await startTestApp({}, { jobs: true });
  owner = await sessionFor(t, 'owner');
  moderator = await sessionFor(t, 'moderator');
  admin = await sessionFor(t, 'admin');
  follower = await sessionFor(t, 'follower');
  anonymous = await sessionFor(t, 'anonymous');
  second = await sessionWithRole(t, 'moderator', 'second-mod');
  f = await makeReviewFixture(owner, { clipFile });
  expect((await move(owner, f.story.id, 'submit')).status).toBe(200);
  // A second story of the same build, sent later: the queue is oldest sent first.
  const later = await owner.agent
    .post(`/api/builds/${f.buildId}/stories`)
    .set('x-csrf-token', owner.token)
    .send({ title: 'Rotor height, again (test)', body: fixtureBody() })
    .expect(201);
  laterStoryId = storyResponseSchema.parse(later.body).story.id;
  expect((await move(owner, laterStoryId, 'submit')).status).toBe(200);
}, 180_000);

afterAll(async () => {
  await t?.close();
  if (work) fs.rmSync(work, { recursive: true, force: true });
});

describe('claiming a story for review', () => {
  it('when two moderators claim at once, exactly one gets it and the other is told who has it', async () => {
    const [a, b] = await Promise.all([claim(moderator, f.story.id), claim(second, f.story.id)]);
    expect([a.status, b.status].sort()).toEqual([200, 409]);
    const [won, lost] = a.status === 200 ? [a, b] : [b, a];
    expect(error(lost).code).toBe('claimed_by_other');
    expect(error(lost).message).toContain(`${won.body.claim.moderatorName} is checking this story until`);
    const stored = await ReviewClaim.findAll({ where: { storyId: f.story.id } });
    expect(stored).toHaveLength(1);
    expect(stored[0]!.moderatorId).toBe(won.body.claim.moderatorId);
    // Tidy up for the next test: the winner lets go.
    expect((await release(won === a ? moderator : second, f.story.id)).status).toBe(204);
  });

  it(`a claim lasts ${CLAIM_MINUTES} minutes; renewing it is allowed to its holder only`, async () => {
    const before = Date.now();
    const res = await claim(moderator, f.story.id).expect(200);
    const expiresAt = Date.parse(res.body.claim.expiresAt);
    expect(expiresAt - before).toBeGreaterThanOrEqual(CLAIM_MINUTES * 60_000 - 1000);
    expect(expiresAt - Date.now()).toBeLessThanOrEqual(CLAIM_MINUTES * 60_000);
    expect((await claim(moderator, f.story.id)).status).toBe(200);
    expect(error(await claim(second, f.story.id).expect(409)).code).toBe('claimed_by_other');
    // Only the holder (or an admin) lets it go.
    expect((await release(second, f.story.id)).status).toBe(403);
    expect((await release(admin, f.story.id)).status).toBe(204);
    expect(await ReviewClaim.count({ where: { storyId: f.story.id } })).toBe(0);
  });

  it('once a claim has expired, another moderator can take the story, and the queue shows the new holder', async () => {
    await claim(moderator, f.story.id).expect(200);
    await ReviewClaim.update({ expiresAt: new Date(Date.now() - 1000) }, { where: { storyId: f.story.id } });
    const queued = (await wholeQueue(second, 100)).find((i) => i.storyId === f.story.id)!;
    expect(queued.claim).toBeNull();
    const res = await claim(second, f.story.id);
    expect(res.status).toBe(200);
    const now = (await wholeQueue(second, 100)).find((i) => i.storyId === f.story.id)!;
    expect(now.claim).toMatchObject({ moderatorId: second.userId });
    await release(second, f.story.id).expect(204);
  });

  it('with the clock injected: refused up to the end of the hold, taken over after it', async () => {
    const [first, other] = (await Promise.all([moderator, second].map(async (s) => (await s.agent.get('/api/me').expect(200)).body.user.id as number))) as [number, number];
    const [firstUser, otherUser] = [(await User.findByPk(first))!, (await User.findByPk(other))!];
    const t0 = new Date('2031-03-01T08:00:00.000Z');
    const at = (ms: number): ReviewDeps => ({ config: t.config, queue: null, now: () => new Date(t0.getTime() + ms) });
    const held = await claimStory(laterStoryId, firstUser, at(0));
    expect(held.expiresAt).toBe('2031-03-01T08:30:00.000Z');
    const refused = await claimStory(laterStoryId, otherUser, at(CLAIM_MINUTES * 60_000 - 1)).catch((e: unknown) => e);
    expect(refused).toBeInstanceOf(AppError);
    expect(refused).toMatchObject({ status: 409, code: 'claimed_by_other' });
    const taken = await claimStory(laterStoryId, otherUser, at(CLAIM_MINUTES * 60_000));
    expect(taken).toMatchObject({ moderatorId: other, expiresAt: '2031-03-01T09:00:00.000Z' });
    await ReviewClaim.destroy({ where: { storyId: laterStoryId } });
  });

  it('only a story in review can be claimed; a builder cannot claim; a moderator cannot claim their own build', async () => {
    const draft = await owner.agent.post(`/api/builds/${f.buildId}/stories`).set('x-csrf-token', owner.token).send({ title: 'Still a draft (test)' }).expect(201);
    const res = await claim(moderator, draft.body.story.id);
    expect(res.status).toBe(409);
    expect(error(res).code).toBe('story_not_in_review');
    expect((await claim(owner, f.story.id)).status).toBe(403);
    expect((await claim(follower, f.story.id)).status).toBe(403);
    expect((await claim(anonymous, f.story.id)).status).toBe(401);
  });
});

describe('the review queue', () => {
  it('lists stories in review oldest sent first, with builder, build, counts, what is left to check and the claim', async () => {
    await claim(moderator, f.story.id).expect(200);
    expect((await checkSubject(moderator, f.story.id, 'reading', f.readings.depth.id)).status).toBe(201);
    expect((await checkSubject(moderator, f.story.id, 'reading', f.readings.height.id, 'flagged', 'the thimble is not in the still')).status).toBe(201);
    const mine = (await wholeQueue(moderator, 100)).filter((i) => i.storyId === f.story.id || i.storyId === laterStoryId);
    expect(mine.map((i) => i.storyId)).toEqual([f.story.id, laterStoryId]);
    expect(mine[0]).toMatchObject({
      title: f.story.title,
      state: 'in-review',
      buildId: f.buildId,
      buildTitle: 'Invented flat-twin oil pump (review test)',
      builderName: 'Ines Calloway',
      readings: 2,
      clearances: 1,
      // The clearance is unchecked and the height is flagged: a flag still counts as left.
      leftToCheck: 2,
      claim: { moderatorName: 'Dagny Orlov' },
      republication: false,
    });
    expect(Date.parse(mine[0]!.submittedAt)).toBeLessThan(Date.parse(mine[1]!.submittedAt));
    await release(moderator, f.story.id).expect(204);
  });

  it('pages by keyset without repeating or skipping a story', async () => {
    // Other test files may send stories meanwhile, so compare what both walks must share.
    const paged = await wholeQueue(moderator, 1);
    expect(new Set(paged.map((i) => i.storyId)).size).toBe(paged.length);
    expect(paged.map((i) => i.storyId).filter((id) => id === f.story.id || id === laterStoryId)).toEqual([f.story.id, laterStoryId]);
    const keys = paged.map((i) => `${i.submittedAt}_${String(i.storyId).padStart(12, '0')}`);
    expect([...keys].sort()).toEqual(keys);
    const bad = await moderator.agent.get('/api/review/queue').query({ after: 'yesterday' });
    expect(bad.status).toBe(400);
    expect(error(bad).details[0]!.path).toBe('after');
  });

  it('is for moderators and admins only', async () => {
    expect((await admin.agent.get('/api/review/queue')).status).toBe(200);
    expect((await owner.agent.get('/api/review/queue')).status).toBe(403);
    expect((await follower.agent.get('/api/review/queue')).status).toBe(403);
    expect((await anonymous.agent.get('/api/review/queue')).status).toBe(401);
  });
});
