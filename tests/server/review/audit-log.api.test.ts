import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { auditListResponseSchema } from '@shared/review/review.schema';
import { makeTestClip } from '../../support/clips';
import { sessionFor, type Session } from '../../support/matrix-fixtures';
import { checkSubject, claimAndCheckAll, makeReviewFixture, move, type ReviewFixture } from '../../support/review-fixtures';
import { startTestApp, type TestApp } from '../../support/test-app';

let t: TestApp;
let work: string;
let owner: Session;
let moderator: Session;
let admin: Session;
let follower: Session;
let anonymous: Session;
let ownerId: number;
let moderatorId: number;
let f: ReviewFixture;
let flagId: number;

const storyAudit = async (s: Session, query: Record<string, string | number> = {}) =>
  auditListResponseSchema.parse((await s.agent.get(`/api/stories/${f.story.id}/audit`).query({ limit: 200, ...query }).expect(200)).body);

beforeAll(async () => {
  work = fs.mkdtempSync(path.join(os.tmpdir(), 'benchproof-audit-'));
  const clipFile = await makeTestClip({ seconds: 2, format: 'mp4-h264', dir: work });
  t = await startTestApp({}, { jobs: true });
  owner = await sessionFor(t, 'owner');
  moderator = await sessionFor(t, 'moderator');
  admin = await sessionFor(t, 'admin');
  follower = await sessionFor(t, 'follower');
  anonymous = await sessionFor(t, 'anonymous');
  ownerId = (await owner.agent.get('/api/me').expect(200)).body.user.id;
  moderatorId = (await moderator.agent.get('/api/me').expect(200)).body.user.id;
  f = await makeReviewFixture(owner, { clipFile });

  // A whole review: sent, claimed, checked, one flag answered, changes asked, sent again, published, withdrawn.
  await move(owner, f.story.id, 'submit');
  await claimAndCheckAll(moderator, f);
  flagId = (await checkSubject(moderator, f.story.id, 'reading', f.readings.height.id, 'flagged', 'the thimble is hidden by a hand')).body.check.id;
  await move(moderator, f.story.id, 'request-changes', { reason: 'show the thimble' });
  await owner.agent.post(`/api/review/checks/${flagId}/answers`).set('x-csrf-token', owner.token).send({ body: 'A second clip shows it; same reading.' }).expect(201);
  await move(owner, f.story.id, 'submit');
  await moderator.agent.post(`/api/review/stories/${f.story.id}/claim`).set('x-csrf-token', moderator.token).expect(200);
  await checkSubject(moderator, f.story.id, 'reading', f.readings.height.id);
  expect((await move(moderator, f.story.id, 'publish')).status).toBe(200);
  expect((await move(owner, f.story.id, 'withdraw', { reason: 'a better clip is coming' })).status).toBe(200);
}, 180_000);

afterAll(async () => {
  await t?.close();
  if (work) fs.rmSync(work, { recursive: true, force: true });
});

describe('the audit log', () => {
  it('has a line for every state change and check, with who, when and before/after, newest first', async () => {
    const { items } = await storyAudit(moderator);
    const oldestFirst = [...items].reverse();
    expect(oldestFirst.map((l) => l.action)).toEqual([
      'story.submit',
      'review.claim',
      'check.checked',
      'check.checked',
      'check.checked',
      'check.flagged',
      'story.request-changes',
      'check.answered',
      'story.submit',
      'review.claim',
      'check.checked',
      'story.publish',
      'story.withdraw',
    ]);
    const line = (action: string, nth = 0) => oldestFirst.filter((l) => l.action === action)[nth]!;
    expect(line('story.submit')).toMatchObject({ actorId: ownerId, actorName: 'Ines Calloway', before: { state: 'draft' }, after: { state: 'in-review' } });
    expect(line('review.claim')).toMatchObject({ actorId: moderatorId, actorName: 'Dagny Orlov', before: null, after: { moderatorId } });
    expect(line('check.checked')).toMatchObject({ subjectType: 'reading', subjectId: f.readings.depth.id, before: { reviewState: 'unchecked' }, after: { reviewState: 'checked', lockVersion: f.readings.depth.lockVersion } });
    expect(line('check.flagged')).toMatchObject({ subjectId: f.readings.height.id, before: { reviewState: 'checked' }, after: { reviewState: 'flagged', comment: 'the thimble is hidden by a hand' } });
    expect(line('story.request-changes')).toMatchObject({ before: { state: 'in-review' }, after: { state: 'changes-requested' }, note: 'show the thimble' });
    expect(line('check.answered')).toMatchObject({ actorId: ownerId, before: { checkId: flagId, state: 'flagged' }, after: { checkId: flagId, body: 'A second clip shows it; same reading.' } });
    expect(line('story.publish')).toMatchObject({ actorId: moderatorId, before: { state: 'in-review', publishedPublicationId: null }, after: { state: 'published', revision: 1 } });
    expect(line('story.withdraw')).toMatchObject({ actorId: ownerId, before: { state: 'published' }, after: { state: 'withdrawn', withdrawnBy: ownerId }, note: 'a better clip is coming' });
    for (const l of items) expect(Number.isNaN(Date.parse(l.at))).toBe(false);
  });

  it('pages newest first by keyset', async () => {
    const all = (await storyAudit(moderator)).items;
    const first = await storyAudit(moderator, { limit: 5 });
    expect(first.items.map((l) => l.id)).toEqual(all.slice(0, 5).map((l) => l.id));
    const next = await storyAudit(moderator, { limit: 5, before: first.nextBefore! });
    expect(next.items.map((l) => l.id)).toEqual(all.slice(5, 10).map((l) => l.id));
  });

  it('is read by moderators and admins only, for one story or the whole site', async () => {
    expect((await admin.agent.get(`/api/stories/${f.story.id}/audit`)).status).toBe(200);
    const site = auditListResponseSchema.parse((await admin.agent.get('/api/review/audit').query({ storyId: f.story.id }).expect(200)).body);
    expect(site.items.length).toBe((await storyAudit(moderator)).items.length);
    for (const s of [owner, follower]) {
      expect((await s.agent.get(`/api/stories/${f.story.id}/audit`)).status).toBe(403);
      expect((await s.agent.get('/api/review/audit')).status).toBe(403);
    }
    expect((await anonymous.agent.get('/api/review/audit')).status).toBe(401);
  });

  it('can never be changed: the database refuses UPDATE, DELETE and TRUNCATE', async () => {
    // This story's lines only: other test files may be writing lines of their own meanwhile.
    const count = async () => Number(((await t.sequelize.query(`SELECT count(*) AS n FROM audit_log WHERE story_id = ${f.story.id}`, { plain: true })) as { n: string }).n);
    const before = await count();
    const id = (await storyAudit(moderator)).items[0]!.id;
    await expect(t.sequelize.query(`UPDATE audit_log SET note = 'rewritten' WHERE id = ${Number(id)}`)).rejects.toThrow(/audit_log is append-only/);
    await expect(t.sequelize.query(`DELETE FROM audit_log WHERE id = ${Number(id)}`)).rejects.toThrow(/audit_log is append-only/);
    await expect(t.sequelize.query('TRUNCATE audit_log')).rejects.toThrow(/audit_log is append-only/);
    expect(await count()).toBe(before);
    expect((await storyAudit(moderator)).items[0]!.note).toBe('a better clip is coming');
  });
});
