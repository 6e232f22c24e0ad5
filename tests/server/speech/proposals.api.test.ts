import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import request from 'supertest';
import { clipSchema } from '@shared/clips/clip.schema';
import { errorBodySchema } from '@shared/http/error.schema';
import { clipSuggestionsResponseSchema, type Suggestion } from '@shared/speech/speech.schema';
import { ProposalDismissal } from '../../../server/features/speech/speech.model';
import { storeClipWords } from '../../../server/features/speech/speech.service';
import { makeTestClip } from '../../support/clips';
import { makeNarratedClip, waitForListening } from '../../support/narration';
import { csrfToken, signIn, startTestApp, type TestApp } from '../../support/test-app';

/*
 * Proposals heard in a clip, as its builder works through them: dismissed and brought back (by
 * the build's builder only), and marked logged once a reading near their time holds their figure.
 * The clip is narrated by festival and heard by pocketsphinx, as in listen.api.test.ts.
 *
 * "five hundred sixty four and two tenths" is 564.2 thou = 0.5642 in; "twelve point five
 * millimeters" is 12.5 mm: thou and tenths as the trade says them, common practice (no published
 * source); 1 in = 1000 thou = 25.4 mm exactly by NIST SP 811 B.8.
 */

const PHRASE_AT = { opening: 1, thou: 3, mm: 7 } as const;
const CLIP_SECONDS = 10;

type Agent = Awaited<ReturnType<typeof signIn>>;
let t: TestApp;
let work: string;
let builder: Agent;
let token: string;
let buildId: number;
let micrometerId: number;
let clipId: number;
let thou: Suggestion;
let mm: Suggestion;

async function proposals(agent: Agent = builder, clip = clipId) {
  return clipSuggestionsResponseSchema.parse((await agent.get(`/api/clips/${clip}/suggestions`).expect(200)).body);
}
const byId = async (id: string) => (await proposals()).suggestions.find((p) => p.id === id)!;
const dismissUrl = (id: string, clip = clipId) => `/api/clips/${clip}/suggestions/${id}/dismiss`;
const dismissalRows = (clip = clipId) => ProposalDismissal.count({ where: { clipId: clip } });

async function upload(file: string): Promise<number> {
  const res = await builder.post(`/api/builds/${buildId}/clips`).set('x-csrf-token', token).attach('file', file, path.basename(file)).expect(201);
  return clipSchema.parse(res.body.clip).id;
}

async function momentAt(atMs: number, clip = clipId): Promise<number> {
  const res = await builder.post(`/api/clips/${clip}/moments`).set('x-csrf-token', token).send({ atMs }).expect(201);
  return res.body.moment.id as number;
}

async function logReading(name: string, momentId: number, figures: Record<string, unknown>): Promise<{ id: number; key: string }> {
  const res = await builder
    .post(`/api/builds/${buildId}/readings`)
    .set('x-csrf-token', token)
    .send({ momentId, instrumentId: micrometerId, name, takenOn: '2026-12-09', ...figures })
    .expect(201);
  return { id: res.body.reading.id, key: res.body.reading.key };
}

beforeAll(async () => {
  work = fs.mkdtempSync(path.join(os.tmpdir(), 'benchproof-proposals-'));
  t = await startTestApp({}, { jobs: true });
  builder = await signIn(t, 'demo-builder');
  token = await csrfToken(builder);
  const build = await builder
    .post('/api/builds')
    .set('x-csrf-token', token)
    .send({ title: 'Test proposals: bore depth and a spacer read aloud', subject: 'invented test engine', parts: [{ name: 'Block', serial: 'TP-0001' }] })
    .expect(201);
  buildId = build.body.build.id;
  const instrument = await builder
    .post('/api/instruments')
    .set('x-csrf-token', token)
    .send({ name: 'Proposals test micrometer 0–1 in', kind: 'outside-micrometer', unit: 'in', resolution: '0.0001' })
    .expect(201);
  micrometerId = instrument.body.instrument.id;

  const file = await makeNarratedClip({
    dir: work,
    seconds: CLIP_SECONDS,
    phrases: [
      { atS: PHRASE_AT.opening, text: 'the depth reads' },
      { atS: PHRASE_AT.thou, text: 'five hundred sixty four and two tenths' },
      { atS: PHRASE_AT.mm, text: 'twelve point five millimeters' },
    ],
  });
  clipId = await upload(file);
  const heard = await waitForListening(builder, clipId);
  expect(heard.state, 'pocketsphinx must be installed: npm test installs it (scripts/lib/speech.ts)').toBe('done');
  const body = await proposals();
  const found = (unit: string, value: string) => body.suggestions.find((p) => p.kind === 'direct' && p.unit === unit && p.value === value);
  thou = found('thou', '564.2')!;
  mm = found('mm', '12.5')!;
  expect({ thou, mm }, JSON.stringify(body.suggestions)).toEqual({ thou: expect.anything(), mm: expect.anything() });
}, 240_000);

afterAll(async () => {
  await t?.close();
  if (work) fs.rmSync(work, { recursive: true, force: true });
});

describe('proposals heard in a clip', () => {
  it('are listed at their times, neither dismissed nor logged at first', () => {
    expect(Math.abs(thou.atMs - PHRASE_AT.thou * 1000)).toBeLessThanOrEqual(1500);
    expect(Math.abs(mm.atMs - PHRASE_AT.mm * 1000)).toBeLessThanOrEqual(1500);
    for (const p of [thou, mm]) expect(p).toMatchObject({ dismissed: false, logged: false });
    expect(thou.readingKey).toBeUndefined();
  });
});

describe('dismissing a proposal and bringing it back', () => {
  it('is remembered for the clip, harmless to repeat, and undone by DELETE', async () => {
    await builder.post(dismissUrl(mm.id)).set('x-csrf-token', token).expect(204);
    expect((await byId(mm.id)).dismissed).toBe(true);
    expect((await byId(thou.id)).dismissed).toBe(false);
    // Again: still one dismissal.
    await builder.post(dismissUrl(mm.id)).set('x-csrf-token', token).expect(204);
    expect(await dismissalRows()).toBe(1);

    await builder.delete(dismissUrl(mm.id)).set('x-csrf-token', token).expect(204);
    expect((await byId(mm.id)).dismissed).toBe(false);
    expect(await dismissalRows()).toBe(0);
    // Bringing back what is not dismissed changes nothing.
    await builder.delete(dismissUrl(mm.id)).set('x-csrf-token', token).expect(204);
  });

  it('is the build’s builder’s alone: others are refused and nothing is stored', async () => {
    const other = await signIn(t, 'demo-builder-2');
    const moderator = await signIn(t, 'demo-moderator');
    const admin = await signIn(t, 'demo-admin');
    const follower = await signIn(t, 'demo-follower');
    const cases: [Agent, number][] = [
      [other, 404],
      [moderator, 403],
      [admin, 403],
      [follower, 403],
    ];
    for (const [agent, status] of cases) {
      const tok = await csrfToken(agent);
      const res = await agent.post(dismissUrl(thou.id)).set('x-csrf-token', tok).expect(status);
      expect(errorBodySchema.parse(res.body).error.code).toBe(status === 404 ? 'not_found' : 'forbidden');
      await agent.delete(dismissUrl(thou.id)).set('x-csrf-token', tok).expect(status);
    }
    // A visitor with a session (and so a CSRF token) but no account.
    const visitor = request.agent(t.server);
    const visitorToken = await csrfToken(visitor);
    await visitor.post(dismissUrl(thou.id)).set('x-csrf-token', visitorToken).expect(401);
    expect(await dismissalRows()).toBe(0);

    // The builder's own undo is not undone by others either.
    await builder.post(dismissUrl(thou.id)).set('x-csrf-token', token).expect(204);
    const otherToken = await csrfToken(other);
    await other.delete(dismissUrl(thou.id)).set('x-csrf-token', otherToken).expect(404);
    expect((await byId(thou.id)).dismissed).toBe(true);
    await builder.delete(dismissUrl(thou.id)).set('x-csrf-token', token).expect(204);
  });

  it('needs the CSRF token, a well-formed id and a proposal the clip has now', async () => {
    const csrf = await builder.post(dismissUrl(thou.id));
    expect(csrf.status).toBe(403);
    expect(errorBodySchema.parse(csrf.body).error.code).toBe('csrf_invalid');
    const malformed = await builder.post(dismissUrl('not-an-id')).set('x-csrf-token', token).expect(400);
    expect(errorBodySchema.parse(malformed.body).error.details.map((d) => d.path)).toContain('id');
    const unknown = await builder.post(dismissUrl('999999-0')).set('x-csrf-token', token).expect(404);
    expect(errorBodySchema.parse(unknown.body).error.code).toBe('not_found');
    expect(await dismissalRows()).toBe(0);
  });

  it('goes with its clip', async () => {
    const silent = await upload(await makeTestClip({ format: 'mp4-h264', dir: work, seconds: 2, audio: false, name: 'silent-spacer' }));
    await waitForListening(builder, silent);
    await storeClipWords(silent, [
      { word: 'three', startMs: 500, endMs: 700, confidence: 0.9 },
      { word: 'thou', startMs: 750, endMs: 1000, confidence: 0.9 },
    ]);
    const [p] = (await proposals(builder, silent)).suggestions;
    expect(p).toMatchObject({ id: '500-0', value: '3', unit: 'thou' });
    await builder.post(dismissUrl(p!.id, silent)).set('x-csrf-token', token).expect(204);
    expect(await dismissalRows(silent)).toBe(1);
    await builder.delete(`/api/clips/${silent}`).set('x-csrf-token', token).expect(204);
    expect(await dismissalRows(silent)).toBe(0);
  }, 120_000);
});

describe('a proposal already logged', () => {
  it('is marked logged, with the reading’s key, only by a reading of its figure near its time', async () => {
    // The same figure 3 s after the words: too far (more than 1.5 s, our rule).
    const far = await logReading('Bore depth, later', await momentAt(thou.endMs + 3000), { kind: 'direct', value: '0.5642' });
    // Near the words, but a step of the micrometer's resolution and more away: 0.5644 in is 0.0002 in off.
    const other = await logReading('Bore depth, other', await momentAt(thou.atMs), { kind: 'direct', value: '0.5644' });
    expect(await byId(thou.id)).toMatchObject({ logged: false });

    // 0.5643 in is one step (0.0001 in) from 564.2 thou = 0.5642 in: the same within the reading's resolution.
    const near = await logReading('Bore depth as supplied', await momentAt(thou.endMs + 1000), { kind: 'direct', value: '0.5643' });
    const marked = await byId(thou.id);
    expect(marked).toMatchObject({ logged: true, readingKey: near.key, readingId: near.id });
    expect(near.key).not.toBe(far.key);
    expect(near.key).not.toBe(other.key);
    // The millimetre figure is not what was logged.
    expect(await byId(mm.id)).toMatchObject({ logged: false });
    expect((await byId(mm.id)).readingKey).toBeUndefined();
  });

  it('stays marked for a reviewer reading the clip, who cannot dismiss it', async () => {
    const moderator = await signIn(t, 'demo-moderator');
    const seen = (await proposals(moderator)).suggestions.find((p) => p.id === thou.id);
    expect(seen).toMatchObject({ logged: true });
  });
});

describe('an admin’s health check', () => {
  it('says which recognizer listens to clips and whether it can run here; others are not told', async () => {
    const admin = await signIn(t, 'demo-admin');
    const res = await admin.get('/api/health').expect(200);
    expect(res.body.media.recognizer).toEqual({ name: 'pocketsphinx', available: true, why: null });
    const anonymous = await request(t.app).get('/api/health').expect(200);
    expect(anonymous.body.media).toBeUndefined();
    const off = await startTestApp({ SPEECH: 'off' });
    try {
      const offAdmin = await signIn(off, 'demo-admin');
      expect((await offAdmin.get('/api/health').expect(200)).body.media.recognizer).toMatchObject({ available: false, why: expect.stringMatching(/SPEECH=off/) });
    } finally {
      await off.close();
    }
  });
});
