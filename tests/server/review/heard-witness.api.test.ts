import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import request from 'supertest';
import { publicStorySchema } from '@shared/public/public-story.schema';
import { reviewSheetSchema, type ReviewSheet } from '@shared/review/review-sheet.schema';
import { listeningOf, setListeningState, storeClipWords } from '../../../server/features/speech/speech.service';
import { makeTestClip } from '../../support/clips';
import { sessionFor, type Session } from '../../support/matrix-fixtures';
import { StoryPublication } from '../../../server/features/review/review.model';
import { claimAndCheckAll, fixtureKeys, makeReviewFixture, move, type ReviewFixture } from '../../support/review-fixtures';
import { startTestApp, type TestApp } from '../../support/test-app';

/*
 * The review sheet's second witness, through the API: words are stored for the fixture's clip as
 * the listening worker would store them, and the sheet sets what was said near each reading's
 * moment beside the figure logged (the rule: shared/review/heard.ts, tested in
 * tests/shared/review/heard.test.ts).
 *
 * The fixture logs bore depth 0.5642 in at 500 ms and rotor height 0.5595 in at 1 500 ms.
 * "five hundred sixty four and two tenths" is 564.2 thou = 0.5642 in (1 thou = 0.001 in, NIST
 * SP 811 (2008) B.8; thou and tenths as the trade says them, common practice, no published
 * source). "point five five nine four" is 0.5594 in, a tenth (0.0001 in) off the height logged:
 * more than half a step of either figure (our rule, common practice, no published source).
 */

let t: TestApp;
let work: string;
let owner: Session;
let moderator: Session;
let f: ReviewFixture;

/** Words said one after another from `atMs`, 120 ms apart, each 100 ms long. */
function said(text: string, atMs: number) {
  return text.split(' ').map((word, i) => ({ word, startMs: atMs + i * 120, endMs: atMs + i * 120 + 100, confidence: 0.8 }));
}

/** Waits until the worker has finished with the clip's sound, so words stored next are not replaced. */
async function listeningSettled(clipId: number, ms = 60_000) {
  const end = Date.now() + ms;
  for (;;) {
    const state = (await listeningOf(clipId))?.state;
    if (state && state !== 'pending' && state !== 'listening') return state;
    if (Date.now() > end) throw new Error(`listening to clip ${clipId} is still ${state} after ${ms} ms`);
    await new Promise((r) => setTimeout(r, 200));
  }
}

async function sheet(as: Session = moderator): Promise<ReviewSheet> {
  return reviewSheetSchema.parse((await as.agent.get(`/api/review/stories/${f.story.id}`).expect(200)).body);
}

const heardOf = (s: ReviewSheet, key: string) => s.readings.find((r) => r.reading.key === key)?.heard;

beforeAll(async () => {
  work = fs.mkdtempSync(path.join(os.tmpdir(), 'benchproof-heard-witness-'));
  // No sound track: the worker marks the clip listened to with no words at once, and we store ours after.
  const clipFile = await makeTestClip({ seconds: 2, format: 'mp4-h264', dir: work, audio: false });
  t = await startTestApp({}, { jobs: true });
  owner = await sessionFor(t, 'owner');
  moderator = await sessionFor(t, 'moderator');
  f = await makeReviewFixture(owner, { clipFile, title: 'Invented flat-twin oil pump (heard witness test)' });
  expect((await move(owner, f.story.id, 'submit')).status).toBe(200);
  await listeningSettled(f.clipId);
}, 180_000);

afterAll(async () => {
  await t?.close();
  if (work) fs.rmSync(work, { recursive: true, force: true });
});

describe('what was heard near each reading’s moment, on the review sheet', () => {
  it('agrees for the depth said in thou and tenths, and disagrees (naming the closest) for the height said a tenth off', async () => {
    await storeClipWords(f.clipId, [...said('five hundred sixty four and two tenths', 200), ...said('hmm point five five nine four', 1_300)]);
    const s = await sheet();

    expect(heardOf(s, fixtureKeys.depth)).toEqual({
      state: 'agrees',
      text: 'heard ‘five hundred sixty four and two tenths’ at 0:00.2 → 564.2 thou = 0.5642 in: agrees with the logged 0.5642 in',
      figure: { value: '564.2', unit: 'thou' },
      atMs: 200,
      words: 'five hundred sixty four and two tenths',
      source: 'speech',
    });
    // Both figures are within 4 s of 1.5 s; neither is within half a step of 0.5595 in, and 0.5594 in is the closer.
    // "hmm" is a filler: the figure starts at "point", 1 300 + 120 ms.
    expect(heardOf(s, fixtureKeys.height)).toEqual({
      state: 'disagrees',
      text: 'heard ‘point five five nine four’ (no unit said) at 0:01.4 → 0.5594 in (the closest of 2 figures heard): disagrees with the logged 0.5595 in',
      figure: { value: '0.5594', unit: 'in' },
      atMs: 1_420,
      words: 'point five five nine four',
      source: 'speech',
    });
  }, 60_000);

  it('does not block publishing: a disagreement is marked for attention, not a flag', async () => {
    await storeClipWords(f.clipId, said('point five five nine four', 1_300));
    const s = await sheet();
    expect(heardOf(s, fixtureKeys.height)?.state).toBe('disagrees');
    expect(s.blockers.map((b) => b.code)).not.toContain('flagged');
    expect(s.blockers.filter((b) => b.subject.key === fixtureKeys.height).map((b) => b.code)).toEqual(['unchecked']);
  }, 60_000);

  it('says nothing was heard when the clip’s words near the moment hold no length', async () => {
    await storeClipWords(f.clipId, said('the rotor goes in next', 1_000));
    const s = await sheet();
    expect(heardOf(s, fixtureKeys.depth)).toEqual({
      state: 'nothing-heard',
      text: 'nothing heard near this moment: no length was said between 0:00.0 and 0:04.5',
    });
  }, 60_000);

  it('says the clip was not listened to while listening is not done, or not possible on the server', async () => {
    await setListeningState(f.clipId, 'unavailable');
    const s = await sheet();
    expect(heardOf(s, fixtureKeys.depth)).toEqual({ state: 'not-listened', text: 'not listened to: this server has no speech recognizer' });
    expect(heardOf(s, fixtureKeys.height)?.state).toBe('not-listened');
    // The builder sees the same line on their story's sheet.
    expect(heardOf(await sheet(owner), fixtureKeys.depth)?.state).toBe('not-listened');
  }, 60_000);
});

describe('the witness in a publication', () => {
  it('is kept with each reading as judged, and readers are told the figure was heard when it agreed', async () => {
    await storeClipWords(f.clipId, [...said('five hundred sixty four and two tenths', 200), ...said('hmm point five five nine four', 1_300)]);
    await claimAndCheckAll(moderator, f);
    const published = await move(moderator, f.story.id, 'publish');
    expect(published.status).toBe(200);

    const row = await StoryPublication.findOne({ where: { storyId: f.story.id, number: published.body.revision as number } });
    const stored = (row!.evidence as { readings: { key: string; heard?: { state: string } }[] }).readings;
    expect(Object.fromEntries(stored.map((r) => [r.key, r.heard?.state]))).toEqual({ [fixtureKeys.depth]: 'agrees', [fixtureKeys.height]: 'disagrees' });

    const story = publicStorySchema.parse((await request(t.app).get(`/api/public/stories/${f.story.id}`).expect(200)).body);
    const depth = story.claims.flatMap((c) => c.readings).find((r) => r.key === fixtureKeys.depth);
    expect(depth?.heard).toEqual({ state: 'agrees', words: 'five hundred sixty four and two tenths', atMs: 200 });
    // The moderator's line (with "the logged" figure) is theirs; readers get the state, the words and the time.
    const height = story.claims.flatMap((c) => c.readings).find((r) => r.key === fixtureKeys.height);
    expect(height?.heard).toEqual({ state: 'disagrees', words: 'point five five nine four', atMs: 1_420 });
  }, 60_000);
});
