import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { errorBodySchema } from '@shared/http/error.schema';
import { buildFlagsResponseSchema, queueResponseSchema } from '@shared/review/review.schema';
import { reviewSheetSchema } from '@shared/review/review-sheet.schema';
import { storyResponseSchema } from '@shared/stories/story.schema';
import { SpecVersion } from '../../../server/features/specs/spec.model';
import { Story } from '../../../server/features/stories/story.model';
import { User } from '../../../server/features/users/user.model';
import { makeTestClip } from '../../support/clips';
import { sessionFor, type Session } from '../../support/matrix-fixtures';
import {
  checkSubject,
  claimAndCheckAll,
  fixtureBody,
  makeReviewFixture,
  move,
  sessionWithRole,
  type ReviewFixture,
} from '../../support/review-fixtures';
import { startTestApp, type TestApp } from '../../support/test-app';

let t: TestApp;
let work: string;
let clipFile: string;
let owner: Session;
let moderator: Session;
let admin: Session;

const error = (res: { body: unknown }) => errorBodySchema.parse(res.body).error;
const send = (s: Session, verb: 'post' | 'patch' | 'delete', url: string, body?: object) => {
  const req = s.agent[verb](url).set('x-csrf-token', s.token);
  return body === undefined ? req : req.send(body);
};

/** A fixture whose story has been sent for review by its builder. */
async function submitted(body?: string, as: Session = owner): Promise<ReviewFixture> {
  const f = await makeReviewFixture(as, { clipFile, body });
  expect((await move(as, f.story.id, 'submit')).status).toBe(200);
  return f;
}

/** Tries to publish as `who` and returns the refusal's details as [code, message] pairs. */
async function refusal(who: Session, storyId: number): Promise<[string, string][]> {
  const res = await move(who, storyId, 'publish');
  expect(res.status).toBe(409);
  const e = error(res);
  expect(e.code).toBe('publish_blocked');
  return e.details.map((d) => [d.path ?? '', d.message]);
}

beforeAll(async () => {
  work = fs.mkdtempSync(path.join(os.tmpdir(), 'benchproof-publish-gate-'));
  clipFile = await makeTestClip({ seconds: 2, format: 'mp4-h264', dir: work });
  t = await startTestApp({}, { jobs: true });
  owner = await sessionFor(t, 'owner');
  moderator = await sessionFor(t, 'moderator');
  admin = await sessionFor(t, 'admin');
}, 120_000);

afterAll(async () => {
  await t?.close();
  if (work) fs.rmSync(work, { recursive: true, force: true });
});

describe('the publish gate refuses, one detail per reason', () => {
  it('when everything the claims rely on is checked and the words agree, publishing succeeds as revision 1', async () => {
    const f = await submitted();
    await claimAndCheckAll(moderator, f);
    const sheet = reviewSheetSchema.parse((await moderator.agent.get(`/api/review/stories/${f.story.id}`).expect(200)).body);
    expect(sheet.blockers).toEqual([]);
    const res = await move(moderator, f.story.id, 'publish');
    expect(res.status).toBe(200);
    expect(res.body).toEqual({ storyId: f.story.id, state: 'published', revision: 1 });
  }, 60_000);

  it('while a reading the clearance uses has not been checked', async () => {
    const f = await submitted();
    await send(moderator, 'post', `/api/review/stories/${f.story.id}/claim`).expect(200);
    expect((await checkSubject(moderator, f.story.id, 'reading', f.readings.depth.id)).status).toBe(201);
    expect((await checkSubject(moderator, f.story.id, 'clearance', f.clearance.id)).status).toBe(201);
    const details = await refusal(moderator, f.story.id);
    // The height is cited only through the end-float clearance, and still needs its own check.
    expect(details).toEqual([['unchecked', expect.stringContaining('"Rotor height" (rotor-height) has not been checked')]]);
    expect((await Story.findByPk(f.story.id))!.state).toBe('in-review');
  }, 60_000);

  it('while a reading is flagged', async () => {
    const f = await submitted();
    await claimAndCheckAll(moderator, f);
    const flag = await checkSubject(moderator, f.story.id, 'reading', f.readings.height.id, 'flagged', 'the micrometer in the still is not the one logged');
    expect(flag.status).toBe(201);
    expect(flag.body.check).toMatchObject({ state: 'flagged', current: true, subjectKey: 'rotor-height' });
    const details = await refusal(moderator, f.story.id);
    expect(details).toEqual([['flagged', expect.stringContaining('the micrometer in the still is not the one logged')]]);
  }, 60_000);

  it('while a reading has changed since it was checked (the check was of its older version)', async () => {
    const f = await submitted();
    await claimAndCheckAll(moderator, f);
    // 0.5642 − 0.5596 = 0.0046 in, still inside the words "0.0047 in" (0.00465–0.00475 in) within U.
    const edit = await send(owner, 'patch', `/api/readings/${f.readings.height.id}`, { value: '0.5596', lockVersion: f.readings.height.lockVersion });
    expect(edit.status).toBe(200);
    const details = await refusal(moderator, f.story.id);
    expect(details).toEqual([['changed-since-checked', expect.stringContaining('"Rotor height" (rotor-height) has changed since it was checked')]]);
    const sheet = reviewSheetSchema.parse((await moderator.agent.get(`/api/review/stories/${f.story.id}`).expect(200)).body);
    const height = sheet.readings.find((r) => r.reading.id === f.readings.height.id)!;
    expect(height.check).toMatchObject({ state: 'checked', current: false });
    expect(sheet.readings.find((r) => r.reading.id === f.readings.depth.id)!.check).toMatchObject({ state: 'checked', current: true });
  }, 60_000);

  it('while a claim’s words disagree with its number (a reading changed after the story was sent)', async () => {
    const f = await submitted();
    // 0.5642 − 0.5580 = 0.0062 in: the words "0.0047 in" (0.00465–0.00475 in) no longer fit.
    const edit = await send(owner, 'patch', `/api/readings/${f.readings.height.id}`, { value: '0.5580', lockVersion: f.readings.height.lockVersion });
    expect(edit.status).toBe(200);
    await claimAndCheckAll(moderator, f);
    const details = await refusal(moderator, f.story.id);
    expect(details).toEqual([['claim-disagrees', expect.stringMatching(/“0\.0047 in” means 0\.00465–0\.00475 in.*do not overlap/)]]);
    // The queue card says so before anyone opens the story.
    const queue = queueResponseSchema.parse((await moderator.agent.get('/api/review/queue?limit=100').expect(200)).body);
    expect(queue.items.find((i) => i.storyId === f.story.id)?.claimProblems).toEqual([expect.stringContaining('“0.0047 in” means')]);
  }, 60_000);

  it.each([
    ['claim-unknown', 'The [tip gap was two thou](reading:rotor-tip-gap) on every lobe.', 'This build has no reading "rotor-tip-gap"'],
    ['claim-broken', 'The [tip gap was two thou](readng:rotor-tip-gap) on every lobe.', '"readng:" is not a kind of claim'],
  ])('while a claim is %s (a story already in review when it went wrong)', async (code, extra, words) => {
    const f = await makeReviewFixture(owner, { clipFile, body: fixtureBody({ extra }) });
    // Sending it would be refused now (see below); a story in review before that rule stands for it.
    await Story.update({ state: 'in-review', submittedAt: new Date() }, { where: { id: f.story.id } });
    await claimAndCheckAll(moderator, f);
    const details = await refusal(moderator, f.story.id);
    expect(details).toEqual([[code, expect.stringContaining(words)]]);
  }, 60_000);

  it('while the moderator holds no claim on it (let go, or held by someone else)', async () => {
    const f = await submitted();
    await claimAndCheckAll(moderator, f);
    expect((await send(moderator, 'delete', `/api/review/stories/${f.story.id}/claim`)).status).toBe(204);
    expect(await refusal(moderator, f.story.id)).toEqual([['no-claim-held', expect.stringContaining('Take the story for review first')]]);

    await send(admin, 'post', `/api/review/stories/${f.story.id}/claim`).expect(200);
    expect(await refusal(moderator, f.story.id)).toEqual([['no-claim-held', expect.any(String)]]);
  }, 60_000);

  it('while the spec of a cited clearance has no source', async () => {
    const f = await submitted();
    await claimAndCheckAll(moderator, f);
    // The API never accepts a spec without a source; an old row can still lack one.
    const { sourceText } = (await SpecVersion.findByPk(f.spec.versionId))!;
    await SpecVersion.update({ sourceText: '' }, { where: { id: f.spec.versionId } });
    try {
      const details = await refusal(moderator, f.story.id);
      expect(details).toContainEqual(['spec-without-source', 'The spec of "End float" cites no source.']);
    } finally {
      // Other files list every spec a moderator sees and parse it with the API's schema: put it back.
      await SpecVersion.update({ sourceText }, { where: { id: f.spec.versionId } });
    }
  }, 60_000);

  it('when a moderator who is also the builder tries to approve their own story', async () => {
    const both = await sessionWithRole(t, 'builder', 'mod-builder');
    const f = await submitted(undefined, both);
    await claimAndCheckAll(moderator, f);
    await send(moderator, 'delete', `/api/review/stories/${f.story.id}/claim`).expect(204);
    await User.update({ role: 'moderator' }, { where: { id: both.userId } });

    // They cannot take it for review, and the gate names both reasons; nothing about the evidence.
    const claim = await send(both, 'post', `/api/review/stories/${f.story.id}/claim`);
    expect(claim.status).toBe(403);
    const details = await refusal(both, f.story.id);
    expect(details.map(([code]) => code)).toEqual(['own-story', 'no-claim-held']);
    expect(details[0]![1]).toBe('You cannot approve a story of your own build; another moderator must.');
  }, 60_000);
});

describe('flags go back to the builder as a list to answer', () => {
  it('a flag is answered, the reading corrected, and after a new check the story can be published', async () => {
    const f = await submitted();
    await claimAndCheckAll(moderator, f);
    const flag = (await checkSubject(moderator, f.story.id, 'reading', f.readings.depth.id, 'flagged', 'the dial in the still reads 0.5643, not 0.5642')).body.check;
    const back = await move(moderator, f.story.id, 'request-changes', { reason: 'one reading does not match the footage' });
    expect(back.status).toBe(200);
    expect(back.body.state).toBe('changes-requested');

    // The builder sees the flag in the sheet (without blockers, which are for moderators).
    const sheet = reviewSheetSchema.parse((await owner.agent.get(`/api/review/stories/${f.story.id}`).expect(200)).body);
    expect(sheet.blockers).toEqual([]);
    expect(sheet.checks.filter((c) => c.state === 'flagged' && c.current).map((c) => c.comment)).toEqual(['the dial in the still reads 0.5643, not 0.5642']);

    // And in the workspace: the build's standing flags, with the story they belong to.
    const standing = buildFlagsResponseSchema.parse((await owner.agent.get(`/api/review/builds/${f.buildId}/flags`).expect(200)).body).items;
    expect(standing.map((c) => [c.subjectType, c.subjectId, c.comment, c.storyId, c.storyTitle])).toEqual([
      ['reading', f.readings.depth.id, 'the dial in the still reads 0.5643, not 0.5642', f.story.id, f.story.title],
    ]);

    const answer = await send(owner, 'post', `/api/review/checks/${flag.id}/answers`, { body: 'You are right; I copied it wrong. Corrected to 0.5643.' });
    expect(answer.status).toBe(201);
    expect(answer.body.check.answers).toEqual([expect.objectContaining({ body: 'You are right; I copied it wrong. Corrected to 0.5643.', authorName: 'Ines Calloway' })]);
    // A moderator cannot answer for the builder, and a check that is not a flag takes no answer.
    expect((await send(moderator, 'post', `/api/review/checks/${flag.id}/answers`, { body: 'not mine to answer' })).status).toBe(403);
    const plainCheck = sheet.checks.find((c) => c.state === 'checked')!;
    expect(error(await send(owner, 'post', `/api/review/checks/${plainCheck.id}/answers`, { body: 'thanks' }).expect(409)).code).toBe('not_a_flag');

    // 0.5643 in: the claim "0.5642 in" (0.56415–0.56425 in) still overlaps 0.5643 in ± U.
    await send(owner, 'patch', `/api/readings/${f.readings.depth.id}`, { value: '0.5643', lockVersion: f.readings.depth.lockVersion }).expect(200);
    expect((await move(owner, f.story.id, 'submit')).status).toBe(200);
    await send(moderator, 'post', `/api/review/stories/${f.story.id}/claim`).expect(200);
    expect((await refusal(moderator, f.story.id)).map(([code]) => code)).toEqual(['changed-since-checked']);
    expect((await checkSubject(moderator, f.story.id, 'reading', f.readings.depth.id)).status).toBe(201);
    expect((await move(moderator, f.story.id, 'publish')).status).toBe(200);
    // Published: no flag stands on the build any more.
    expect(buildFlagsResponseSchema.parse((await owner.agent.get(`/api/review/builds/${f.buildId}/flags`).expect(200)).body).items).toEqual([]);

    // Every check and answer is kept, newest first.
    const after = reviewSheetSchema.parse((await moderator.agent.get(`/api/review/stories/${f.story.id}`).expect(200)).body);
    expect(after.checks.map((c) => [c.subjectKey, c.state, c.current])).toEqual([
      ['bore-depth', 'checked', true],
      ['bore-depth', 'flagged', false],
      ['end-float', 'checked', true],
      ['rotor-height', 'checked', true],
      ['bore-depth', 'checked', false],
    ]);
    expect(after.checks[1]!.answers).toHaveLength(1);
  }, 90_000);

  it('a check of something the story does not rely on is refused, naming the field', async () => {
    const f = await submitted(fixtureBody({ clearanceWords: 'End float is 0.0047 in' }).replace(/\[The bore depth[^\]]*\]\(reading:bore-depth\)/, 'The bore depth'));
    await send(moderator, 'post', `/api/review/stories/${f.story.id}/claim`).expect(200);
    // Both readings are terms of the cited clearance, so both count; a reading id of no story does not.
    expect((await checkSubject(moderator, f.story.id, 'reading', f.readings.depth.id)).status).toBe(201);
    const res = await checkSubject(moderator, f.story.id, 'reading', 2_000_000_000);
    expect(res.status).toBe(400);
    expect(error(res).details).toEqual([{ path: 'subjectId', message: 'not a reading the story cites' }]);
    const noComment = await checkSubject(moderator, f.story.id, 'reading', f.readings.depth.id, 'flagged');
    expect(noComment.status).toBe(400);
    expect(error(noComment).details[0]!.path).toBe('comment');
  }, 60_000);

  it('checks need the claim: without it a check is refused with claim_not_held', async () => {
    const f = await submitted();
    const res = await checkSubject(moderator, f.story.id, 'reading', f.readings.depth.id);
    expect(res.status).toBe(409);
    expect(error(res).code).toBe('claim_not_held');
  }, 60_000);
});

describe('sending for review refuses a story whose claims cannot stand', () => {
  it('answers 409 submit_blocked with one detail per claim, in the publish gate’s codes, and the story stays a draft', async () => {
    const body = fixtureBody({
      clearanceWords: 'End float is 0.0062 in, within spec',
      extra: 'The [tip gap was two thou](reading:rotor-tip-gap) on every lobe. The [lobe gap](readng:lobe-gap) too.',
    });
    const f = await makeReviewFixture(owner, { clipFile, body });
    const res = await move(owner, f.story.id, 'submit');
    expect(res.status).toBe(409);
    const e = error(res);
    expect(e.code).toBe('submit_blocked');
    expect(e.message).toBe('This story cannot be sent for review yet: 3 claims to correct.');
    expect(e.details.map((d) => d.path).sort()).toEqual(['claim-broken', 'claim-disagrees', 'claim-unknown']);
    expect(e.details.find((d) => d.path === 'claim-disagrees')?.message).toMatch(/“0\.0062 in” means 0\.00615–0\.00625 in/);
    expect((await Story.findByPk(f.story.id))!.state).toBe('draft');
  }, 60_000);
});

describe('the reason for changes reaches the builder’s screens', () => {
  it('the story and its review sheet carry the moderator’s reason until it is sent again', async () => {
    const f = await submitted();
    await send(moderator, 'post', `/api/review/stories/${f.story.id}/claim`).expect(200);
    expect((await move(moderator, f.story.id, 'request-changes', { reason: 'Show the thimble when you read the rotor height.' })).status).toBe(200);
    const me = (await moderator.agent.get('/api/me').expect(200)).body as { displayName?: string; user?: { displayName: string } };
    const moderatorName = me.user?.displayName ?? me.displayName;
    const story = storyResponseSchema.parse((await owner.agent.get(`/api/stories/${f.story.id}`).expect(200)).body).story;
    expect(story.changesRequested).toMatchObject({ reason: 'Show the thimble when you read the rotor height.', moderatorName });
    expect(Date.parse(story.changesRequested!.at)).not.toBeNaN();
    const list = (await owner.agent.get(`/api/builds/${f.buildId}/stories`).expect(200)).body.items as { id: number; changesRequested: unknown }[];
    expect(list.find((i) => i.id === f.story.id)?.changesRequested).toMatchObject({ reason: 'Show the thimble when you read the rotor height.' });
    const sheet = reviewSheetSchema.parse((await owner.agent.get(`/api/review/stories/${f.story.id}`).expect(200)).body);
    expect(sheet.story.changesRequested?.reason).toBe('Show the thimble when you read the rotor height.');

    expect((await move(owner, f.story.id, 'submit')).status).toBe(200);
    const again = storyResponseSchema.parse((await owner.agent.get(`/api/stories/${f.story.id}`).expect(200)).body).story;
    expect(again.changesRequested).toBeNull();
    expect((await Story.findByPk(f.story.id))!.changesRequestedReason).toBeNull();
  }, 60_000);
});
