import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { queueResponseSchema } from '@shared/review/review.schema';
import { reviewSheetSchema } from '@shared/review/review-sheet.schema';
import { StoryPublication } from '../../../server/features/review/review.model';
import { Story } from '../../../server/features/stories/story.model';
import { makeTestClip } from '../../support/clips';
import { sessionFor, type Session } from '../../support/matrix-fixtures';
import { checkSubject, fixtureBody, lockVersionOf, makeReviewFixture, move, publishThroughReview, type ReviewFixture } from '../../support/review-fixtures';
import { startTestApp, type TestApp } from '../../support/test-app';

let t: TestApp;
let work: string;
let owner: Session;
let moderator: Session;
let moderatorId: number;
let f: ReviewFixture;

const send = (s: Session, verb: 'post' | 'patch', url: string, body: object) => s.agent[verb](url).set('x-csrf-token', s.token).send(body);

interface EvidenceClaim {
  kind: string;
  key: string;
  text: string;
  lockVersion: number | null;
  specVersionId: number | null;
  specVersion: number | null;
  checked: { checkId: number; by: number; byName: string; at: string; lockVersion: number } | null;
}
const claimsOf = (p: StoryPublication) => (p.evidence as { claims: EvidenceClaim[] }).claims;
const publications = () => StoryPublication.findAll({ where: { storyId: f.story.id }, order: [['number', 'ASC']] });

async function sheet(s: Session) {
  return reviewSheetSchema.parse((await s.agent.get(`/api/review/stories/${f.story.id}`).expect(200)).body);
}

beforeAll(async () => {
  work = fs.mkdtempSync(path.join(os.tmpdir(), 'benchproof-revisions-'));
  const clipFile = await makeTestClip({ seconds: 2, format: 'mp4-h264', dir: work });
  t = await startTestApp({}, { jobs: true });
  owner = await sessionFor(t, 'owner');
  moderator = await sessionFor(t, 'moderator');
  moderatorId = (await moderator.agent.get('/api/me').expect(200)).body.user.id;
  f = await makeReviewFixture(owner, { clipFile });
}, 180_000);

afterAll(async () => {
  await t?.close();
  if (work) fs.rmSync(work, { recursive: true, force: true });
});

describe('a published story edited and reviewed again', () => {
  it('keeps revision 1 public while revision 2 is reviewed, asks to check only the changed reading, and records what each claim was judged on', async () => {
    // Revision 1.
    expect(await publishThroughReview(owner, moderator, f)).toBe(1);
    const [r1] = await publications();
    expect(r1!.number).toBe(1);
    expect(r1!.body).toBe(fixtureBody());
    const r1Snapshot = r1!.toJSON();
    const r1Claims = claimsOf(r1!);
    expect(r1Claims.map((c) => [c.kind, c.key, c.text])).toEqual([
      ['reading', 'bore-depth', 'The bore depth read 0.5642 in'],
      ['clearance', 'end-float', 'End float is 0.0047 in, within spec'],
    ]);
    expect(r1Claims[1]).toMatchObject({ specVersionId: f.spec.versionId, specVersion: 1, checked: { by: moderatorId, byName: 'Dagny Orlov' } });
    expect(r1Claims[0]!.checked).toMatchObject({ by: moderatorId, lockVersion: f.readings.depth.lockVersion });

    // The builder edits the body and one reading. 0.5642 − 0.5596 = 0.0046 in.
    const lockVersion = await lockVersionOf(owner, f.story.id);
    await send(owner, 'patch', `/api/stories/${f.story.id}`, { body: fixtureBody({ clearanceWords: 'End float is 0.0046 in, within spec' }), lockVersion }).expect(200);
    const height = (await send(owner, 'patch', `/api/readings/${f.readings.height.id}`, { value: '0.5596', lockVersion: f.readings.height.lockVersion }).expect(200)).body.reading;
    expect((await move(owner, f.story.id, 'submit')).body.state).toBe('in-review');

    // The queue shows a republication with one thing left to check: the changed reading.
    const queue = queueResponseSchema.parse((await moderator.agent.get('/api/review/queue').query({ limit: 100 }).expect(200)).body);
    expect(queue.items.find((i) => i.storyId === f.story.id)).toMatchObject({ republication: true, readings: 2, clearances: 1, leftToCheck: 1 });
    const s = await sheet(moderator);
    expect(s.story.hasPublicRevision).toBe(true);
    expect(s.readings.map((r) => [r.reading.key, r.check?.current])).toEqual([
      ['bore-depth', true],
      ['rotor-height', false],
    ]);
    expect(s.clearances.map((c) => [c.clearance.key, c.check?.current])).toEqual([['end-float', true]]);

    // Revision 1 is still what the public sees, unchanged.
    const during = (await Story.findByPk(f.story.id))!;
    expect(during.publishedPublicationId).toBe(r1!.id);
    expect((await StoryPublication.findByPk(r1!.id))!.toJSON()).toEqual(r1Snapshot);

    // Revision 2: the moderator checks only the changed reading.
    await moderator.agent.post(`/api/review/stories/${f.story.id}/claim`).set('x-csrf-token', moderator.token).expect(200);
    expect((await checkSubject(moderator, f.story.id, 'reading', f.readings.height.id)).status).toBe(201);
    const published = await move(moderator, f.story.id, 'publish');
    expect(published.body).toEqual({ storyId: f.story.id, state: 'published', revision: 2 });

    const all = await publications();
    expect(all.map((p) => p.number)).toEqual([1, 2]);
    expect((await Story.findByPk(f.story.id))!.publishedPublicationId).toBe(all[1]!.id);
    expect(all[0]!.toJSON()).toEqual(r1Snapshot);
    const r2Claims = claimsOf(all[1]!);
    expect(r2Claims[1]).toMatchObject({ text: 'End float is 0.0046 in, within spec', specVersionId: f.spec.versionId, specVersion: 1 });
    // The unchanged depth reading keeps the check made for revision 1; the height has a new one.
    expect(r2Claims[0]!.checked!.checkId).toBe(r1Claims[0]!.checked!.checkId);
    const r2Height = (all[1]!.evidence as { readings: { key: string; lockVersion: number; checked: { by: number; lockVersion: number; at: string } }[] }).readings.find((r) => r.key === 'rotor-height')!;
    expect(r2Height).toMatchObject({ lockVersion: height.lockVersion, checked: { by: moderatorId, lockVersion: height.lockVersion } });
    expect(Date.parse(r2Height.checked.at)).toBeGreaterThan(Date.parse(r1Claims[0]!.checked!.at));
  }, 90_000);

  it('a clearance moved to a newer spec version needs a new check, and the next revision records that version', async () => {
    const v2 = (
      await send(owner, 'post', `/api/specs/${f.spec.specId}/versions`, {
        unit: 'in',
        min: '0.003',
        max: '0.0055',
        rule: 'guarded',
        source: { kind: 'manual', text: 'Invented workshop manual, revised section 3 (test figures)' },
      }).expect(201)
    ).body.version;
    const clearance = (await owner.agent.get(`/api/clearances/${f.clearance.id}`).expect(200)).body.clearance;
    await send(owner, 'patch', `/api/clearances/${f.clearance.id}`, { specVersionId: v2.id, lockVersion: clearance.lockVersion }).expect(200);
    expect((await move(owner, f.story.id, 'submit')).status).toBe(200);
    await moderator.agent.post(`/api/review/stories/${f.story.id}/claim`).set('x-csrf-token', moderator.token).expect(200);
    const blocked = await move(moderator, f.story.id, 'publish');
    expect(blocked.status).toBe(409);
    expect(blocked.body.error.details.map((d: { path: string }) => d.path)).toEqual(['changed-since-checked']);
    expect((await checkSubject(moderator, f.story.id, 'clearance', f.clearance.id)).status).toBe(201);
    expect((await move(moderator, f.story.id, 'publish')).body.revision).toBe(3);
    const r3 = (await publications())[2]!;
    expect(claimsOf(r3)[1]).toMatchObject({ specVersionId: v2.id, specVersion: 2, checked: { by: moderatorId } });
  }, 60_000);
});

describe('a published revision', () => {
  it('can never be changed or removed: the database refuses UPDATE and DELETE on story_publications', async () => {
    const [first] = await publications();
    expect(first).toBeDefined();
    await expect(t.sequelize.query(`UPDATE story_publications SET title = 'rewritten' WHERE id = ${first!.id}`)).rejects.toThrow(/written once and never changed/);
    await expect(t.sequelize.query(`DELETE FROM story_publications WHERE id = ${first!.id}`)).rejects.toThrow(/written once and never changed/);
    expect((await StoryPublication.findByPk(first!.id))!.title).toBe(first!.title);
  });
});
