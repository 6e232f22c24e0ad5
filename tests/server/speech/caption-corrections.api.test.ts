import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, beforeEach, describe, expect, it } from 'vitest';
import request from 'supertest';
import { clipSchema } from '@shared/clips/clip.schema';
import { errorBodySchema } from '@shared/http/error.schema';
import {
  captionCorrectionListResponseSchema,
  captionCorrectionResponseSchema,
  clipSuggestionsResponseSchema,
  clipTranscriptResponseSchema,
  type CaptionCorrection,
} from '@shared/speech/speech.schema';
import { CaptionCorrection as CaptionCorrectionRow } from '../../../server/features/speech/corrections.model';
import { storeClipWords, wordsForReaders } from '../../../server/features/speech/speech.service';
import { makeTestClip } from '../../support/clips';
import { waitForListening } from '../../support/narration';
import { csrfToken, signIn, startTestApp, type TestApp } from '../../support/test-app';

/*
 * The builder corrects a clip's captions: their words for a span take the place of the words
 * heard there in the transcript, the captions and the suggested readings, and stay when the clip
 * is listened to again. The words are stored directly (storeClipWords), as a recognizer run would
 * leave them, so the test does not depend on what pocketsphinx hears. "three thou" is 3 thou =
 * 0.003 in (1 in = 1000 thou, common trade usage; NIST SP 811 B.8 for the inch).
 */

const CLIP_SECONDS = 4;
/** What the "recognizer" heard: "three now" where "three thou" was said, then "slides" after a pause. */
const HEARD = [
  { word: 'feeler', startMs: 200, endMs: 600, confidence: 0.9 },
  { word: 'three', startMs: 1000, endMs: 1300, confidence: 0.9 },
  { word: 'now', startMs: 1350, endMs: 1600, confidence: 0.6 },
  { word: 'slides', startMs: 2500, endMs: 2900, confidence: 0.9 },
];

type Agent = Awaited<ReturnType<typeof signIn>>;
let t: TestApp;
let work: string;
let builder: Agent;
let token: string;
let builderId: number;
let buildId: number;
let clipId: number;
let otherClipId: number;

const url = (clip = clipId) => `/api/clips/${clip}/caption-corrections`;
const one = (id: number, clip = clipId) => `${url(clip)}/${id}`;

async function corrections(agent: Agent = builder, clip = clipId): Promise<CaptionCorrection[]> {
  return captionCorrectionListResponseSchema.parse((await agent.get(url(clip)).expect(200)).body).items;
}
async function correct(body: object, clip = clipId): Promise<CaptionCorrection> {
  const res = await builder.post(url(clip)).set('x-csrf-token', token).send(body).expect(201);
  return captionCorrectionResponseSchema.parse(res.body).correction;
}
async function transcriptText(agent: Agent = builder, clip = clipId): Promise<string[]> {
  const res = await agent.get(`/api/clips/${clip}/transcript`).expect(200);
  return clipTranscriptResponseSchema.parse(res.body).words.map((w) => w.text);
}
async function captionsText(clip = clipId): Promise<string> {
  const res = await builder.get(`/api/clips/${clip}/captions.vtt`).expect(200);
  expect(res.headers['content-type']).toMatch(/^text\/vtt/);
  return res.text;
}
async function threeThou() {
  const { suggestions } = clipSuggestionsResponseSchema.parse((await builder.get(`/api/clips/${clipId}/suggestions`).expect(200)).body);
  return suggestions.filter((p) => p.kind === 'direct' && p.unit === 'thou' && p.value === '3');
}
const rows = (clip = clipId) => CaptionCorrectionRow.count({ where: { clipId: clip } });

async function upload(name: string): Promise<number> {
  const file = await makeTestClip({ format: 'mp4-h264', dir: work, seconds: CLIP_SECONDS, audio: false, name });
  const res = await builder.post(`/api/builds/${buildId}/clips`).set('x-csrf-token', token).attach('file', file, path.basename(file)).expect(201);
  return clipSchema.parse(res.body.clip).id;
}

beforeAll(async () => {
  work = fs.mkdtempSync(path.join(os.tmpdir(), 'benchproof-caption-corrections-'));
  t = await startTestApp({}, { jobs: true });
  builder = await signIn(t, 'demo-builder');
  token = await csrfToken(builder);
  builderId = (await builder.get('/api/me').expect(200)).body.user.id;
  const build = await builder
    .post('/api/builds')
    .set('x-csrf-token', token)
    .send({ title: 'Test caption corrections: a feeler gap read aloud', subject: 'invented test engine', parts: [{ name: 'Block', serial: 'TC-0001' }] })
    .expect(201);
  buildId = build.body.build.id;
  [clipId, otherClipId] = [await upload('corrected'), await upload('other')];
  await Promise.all([waitForListening(builder, clipId), waitForListening(builder, otherClipId)]);
}, 240_000);

beforeEach(async () => {
  // Each test starts from the words as heard and no corrections.
  await CaptionCorrectionRow.destroy({ where: { clipId: [clipId, otherClipId] } });
  await storeClipWords(clipId, HEARD);
});

afterAll(async () => {
  await t?.close();
  if (work) fs.rmSync(work, { recursive: true, force: true });
});

describe('a caption correction', () => {
  it('changes the transcript, the captions and the suggested readings', async () => {
    expect(await corrections()).toEqual([]);
    expect(await transcriptText()).toEqual(['feeler', 'three', 'now', 'slides']);
    expect(await captionsText()).toContain('feeler three now');
    expect(await threeThou()).toEqual([]);

    const saved = await correct({ startMs: 1000, endMs: 1600, text: '  three   thou ' });
    expect(saved).toMatchObject({ startMs: 1000, endMs: 1600, text: 'three thou', correctedBy: builderId });
    expect(Date.parse(saved.updatedAt)).not.toBeNaN();
    expect(await corrections()).toEqual([saved]);

    // The transcript keeps its contract: the corrected words spread over the span, confidence 1.
    const transcript = clipTranscriptResponseSchema.parse((await builder.get(`/api/clips/${clipId}/transcript`).expect(200)).body);
    expect(transcript.words).toEqual([
      { startMs: 200, endMs: 600, text: 'feeler', confidence: expect.closeTo(0.9, 5) },
      { startMs: 1000, endMs: 1300, text: 'three', confidence: 1 },
      { startMs: 1300, endMs: 1600, text: 'thou', confidence: 1 },
      { startMs: 2500, endMs: 2900, text: 'slides', confidence: expect.closeTo(0.9, 5) },
    ]);
    for (const w of transcript.words) expect(Object.keys(w).sort()).toEqual(['confidence', 'endMs', 'startMs', 'text']);

    const vtt = await captionsText();
    expect(vtt).toContain('00:00:00.200 --> 00:00:01.600\nfeeler three thou');
    expect(vtt).not.toContain('now');

    const [figure] = await threeThou();
    // Where the figure ends depends on what follows ("slides" may be read as how the blade went).
    expect(figure).toMatchObject({ atMs: 1000, text: expect.stringMatching(/^three thou\b/), unitHeard: true, source: 'speech' });
  });

  it('is what a reviewer reads too, on the transcript and in the second witness', async () => {
    await correct({ startMs: 1000, endMs: 1600, text: 'three thou' });
    const moderator = await signIn(t, 'demo-moderator');
    expect(await transcriptText(moderator)).toEqual(['feeler', 'three', 'thou', 'slides']);
    expect(await corrections(moderator)).toHaveLength(1);
    // The review sheet's second witness reads the clip's words through wordsForReaders too.
    expect((await wordsForReaders(clipId)).map((w) => w.word)).toEqual(['feeler', 'three', 'thou', 'slides']);
  });

  it('stays when the clip is listened to again', async () => {
    const saved = await correct({ startMs: 1000, endMs: 1600, text: 'three thou' });
    // A new run stores its words afresh (and may hear the same mistake again).
    await storeClipWords(clipId, [...HEARD, { word: 'done', startMs: 3200, endMs: 3500, confidence: 0.9 }]);
    expect(await corrections()).toEqual([saved]);
    expect(await transcriptText()).toEqual(['feeler', 'three', 'thou', 'slides', 'done']);
    expect(await threeThou()).toHaveLength(1);
  });

  it('says nothing was said in its span when its text is empty', async () => {
    await correct({ startMs: 2400, endMs: 3000, text: '' });
    expect(await transcriptText()).toEqual(['feeler', 'three', 'now']);
    expect(await captionsText()).not.toContain('slides');
  });

  it('replaces the corrections it overlaps, and leaves the others', async () => {
    const first = await correct({ startMs: 1000, endMs: 1600, text: 'three thou' });
    const apart = await correct({ startMs: 2400, endMs: 3000, text: 'slides easily' });
    const over = await correct({ startMs: 1200, endMs: 2000, text: 'four thou' });
    const items = await corrections();
    expect(items.map((c) => c.id)).toEqual([over.id, apart.id]);
    expect(items.map((c) => c.id)).not.toContain(first.id);
    // "three" (1000–1300) lies partly in the new span: it gives way too.
    expect(await transcriptText()).toEqual(['feeler', 'four', 'thou', 'slides', 'easily']);
    // A span that only touches another does not replace it.
    const touching = await correct({ startMs: 3000, endMs: 3400, text: 'then stops' });
    expect((await corrections()).map((c) => c.id)).toEqual([over.id, apart.id, touching.id]);
  });

  it('once removed, brings back what was heard', async () => {
    const saved = await correct({ startMs: 1000, endMs: 1600, text: 'three thou' });
    await builder.delete(one(saved.id)).set('x-csrf-token', token).expect(204);
    expect(await corrections()).toEqual([]);
    expect(await transcriptText()).toEqual(['feeler', 'three', 'now', 'slides']);
    expect(await captionsText()).toContain('feeler three now');
    expect(await threeThou()).toEqual([]);
    // Gone is gone: again is not found.
    const again = await builder.delete(one(saved.id)).set('x-csrf-token', token).expect(404);
    expect(errorBodySchema.parse(again.body).error.code).toBe('not_found');
  });

  it('of another clip is not found through this one, and is left alone', async () => {
    const elsewhere = await correct({ startMs: 0, endMs: 500, text: 'other clip' }, otherClipId);
    await builder.delete(one(elsewhere.id, clipId)).set('x-csrf-token', token).expect(404);
    expect(await corrections(builder, otherClipId)).toEqual([elsewhere]);
  });
});

describe('refusals', () => {
  it('refuses a span that ends before it starts, is over 60 s, or runs past the clip, and text over 500 characters', async () => {
    const refused = async (body: object, status: number) => {
      const res = await builder.post(url()).set('x-csrf-token', token).send(body).expect(status);
      return errorBodySchema.parse(res.body).error;
    };
    expect((await refused({ startMs: 1600, endMs: 1000, text: 'x' }, 400)).details.map((d) => d.path)).toContain('endMs');
    expect((await refused({ startMs: 0, endMs: 60_001, text: 'x' }, 400)).details.map((d) => d.path)).toContain('endMs');
    expect((await refused({ startMs: 0, endMs: 100, text: 'x'.repeat(501) }, 400)).details.map((d) => d.path)).toContain('text');
    expect((await refused({ startMs: 0, endMs: 100 }, 400)).details.map((d) => d.path)).toContain('text');
    // The clip is 4 s long.
    const past = await refused({ startMs: 3500, endMs: 4500, text: 'after the end' }, 400);
    expect(past.message).toMatch(/past the end of the clip \(4\.0 s\)/);
    expect(past.details).toEqual([{ path: 'endMs', message: expect.stringContaining('after the end of the clip') }]);
    // The last millisecond is still inside.
    await correct({ startMs: 3500, endMs: 4000, text: 'at the end' });
    expect(await rows()).toBe(1);
  });

  it('needs the CSRF token and well-formed ids', async () => {
    const csrf = await builder.post(url()).send({ startMs: 0, endMs: 100, text: 'x' });
    expect(csrf.status).toBe(403);
    expect(errorBodySchema.parse(csrf.body).error.code).toBe('csrf_invalid');
    const malformed = await builder.delete(`${url()}/not-an-id`).set('x-csrf-token', token).expect(400);
    expect(errorBodySchema.parse(malformed.body).error.details.map((d) => d.path)).toContain('correctionId');
    expect(await rows()).toBe(0);
  });

  it('keeps corrections the build’s builder’s own: others are refused and nothing changes', async () => {
    const saved = await correct({ startMs: 1000, endMs: 1600, text: 'three thou' });
    const other = await signIn(t, 'demo-builder-2');
    const moderator = await signIn(t, 'demo-moderator');
    const admin = await signIn(t, 'demo-admin');
    const follower = await signIn(t, 'demo-follower');
    const cases: [Agent, number, number][] = [
      // [who, status of a change, status of reading the list]
      [other, 404, 404],
      [moderator, 403, 200],
      [admin, 403, 200],
      [follower, 403, 404],
    ];
    for (const [agent, change, read] of cases) {
      const tok = await csrfToken(agent);
      const post = await agent.post(url()).set('x-csrf-token', tok).send({ startMs: 2400, endMs: 3000, text: 'not theirs' }).expect(change);
      expect(errorBodySchema.parse(post.body).error.code).toBe(change === 404 ? 'not_found' : 'forbidden');
      await agent.delete(one(saved.id)).set('x-csrf-token', tok).expect(change);
      await agent.get(url()).expect(read);
    }
    const visitor = request.agent(t.server);
    const visitorToken = await csrfToken(visitor);
    await visitor.post(url()).set('x-csrf-token', visitorToken).send({ startMs: 2400, endMs: 3000, text: 'x' }).expect(401);
    await visitor.delete(one(saved.id)).set('x-csrf-token', visitorToken).expect(401);
    await visitor.get(url()).expect(401);
    expect(await corrections()).toEqual([saved]);
    expect(await transcriptText()).toEqual(['feeler', 'three', 'thou', 'slides']);
  });
});

describe('a clip deleted', () => {
  it('takes its corrections with it', async () => {
    const doomed = await upload('doomed');
    await waitForListening(builder, doomed);
    await correct({ startMs: 0, endMs: 500, text: 'gone soon' }, doomed);
    expect(await rows(doomed)).toBe(1);
    await builder.delete(`/api/clips/${doomed}`).set('x-csrf-token', token).expect(204);
    expect(await rows(doomed)).toBe(0);
  }, 120_000);
});
