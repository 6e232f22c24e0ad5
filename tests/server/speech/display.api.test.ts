import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { clipSchema } from '@shared/clips/clip.schema';
import { errorBodySchema } from '@shared/http/error.schema';
import { clipSuggestionsResponseSchema, type ClipSuggestionsResponse } from '@shared/speech/speech.schema';
import { DisplayRegionRow, DisplayValue } from '../../../server/features/speech/speech.model';
import { DISPLAY_REGION, makeDisplayClip } from '../../support/display-clip';
import { waitForListening } from '../../support/narration';
import { csrfToken, signIn, startTestApp, type TestApp } from '../../support/test-app';

/*
 * Reading an instrument's display: the builder marks where the display is (PUT display-region),
 * the worker reads its digits with ssocr from the still frames, and each figure shown for half a
 * second or more is suggested at the time it appeared, in the unit set with the region. The clip
 * is drawn by ffmpeg in the seven-segment font (tests/support/display-clip.ts); the figures are
 * invented test data. 0.5642 in = 14.33068 mm by NIST SP 811 B.8 (1 in = 25.4 mm exactly).
 */

const SHOWN = [
  { fromS: 1, toS: 3.5, text: '0.5642' },
  // Shown for 0.3 s only: a figure changing under the camera, not proposed.
  { fromS: 4.5, toS: 4.8, text: '0.9999' },
  { fromS: 6, toS: 8.5, text: '0.5596' },
] as const;

type Agent = Awaited<ReturnType<typeof signIn>>;
let t: TestApp;
let work: string;
let builder: Agent;
let other: Agent;
let token: string;
let otherToken: string;
let buildId: number;
let clipId: number;

const suggestionsOf = async (agent: Agent = builder): Promise<ClipSuggestionsResponse> =>
  clipSuggestionsResponseSchema.parse((await agent.get(`/api/clips/${clipId}/suggestions`).expect(200)).body);
const fromDisplay = (body: ClipSuggestionsResponse) => body.suggestions.filter((s) => s.source === 'display');

async function waitForDisplay(ms = 90_000): Promise<ClipSuggestionsResponse> {
  const end = Date.now() + ms;
  for (;;) {
    const body = await suggestionsOf();
    if (body.state !== 'queued' && body.state !== 'running') return body;
    if (Date.now() > end) throw new Error(`the display is still ${body.state} after ${ms} ms`);
    await new Promise((r) => setTimeout(r, 300));
  }
}

beforeAll(async () => {
  work = fs.mkdtempSync(path.join(os.tmpdir(), 'benchproof-display-'));
  t = await startTestApp({}, { jobs: true });
  builder = await signIn(t, 'demo-builder');
  other = await signIn(t, 'demo-builder-2');
  token = await csrfToken(builder);
  otherToken = await csrfToken(other);
  const build = await builder
    .post('/api/builds')
    .set('x-csrf-token', token)
    .send({ title: 'Test display: a micrometer read off its display', subject: 'invented test engine', parts: [{ name: 'Block', serial: 'TD-0001' }] })
    .expect(201);
  buildId = build.body.build.id;
  const file = await makeDisplayClip({ dir: work, seconds: 10, shown: SHOWN });
  const res = await builder.post(`/api/builds/${buildId}/clips`).set('x-csrf-token', token).attach('file', file, path.basename(file)).expect(201);
  clipId = clipSchema.parse(res.body.clip).id;
  await waitForListening(builder, clipId);
}, 180_000);

afterAll(async () => {
  await t?.close();
  if (work) fs.rmSync(work, { recursive: true, force: true });
});

describe('PUT /api/clips/:clipId/display-region', () => {
  it('refuses a box outside the frame, a missing figure and an unknown field, naming the field', async () => {
    const put = (body: unknown) => builder.put(`/api/clips/${clipId}/display-region`).set('x-csrf-token', token).send(body as object);
    const cases: [unknown, string][] = [
      [{ x: 0.7, y: 0.1, width: 0.4, height: 0.2 }, 'width'],
      [{ x: 0.1, y: 0.9, width: 0.2, height: 0.2 }, 'height'],
      [{ x: 0.1, y: 0.1, width: 0, height: 0.2 }, 'width'],
      [{ x: -0.1, y: 0.1, width: 0.2, height: 0.2 }, 'x'],
      [{ x: 0.1, width: 0.2, height: 0.2 }, 'y'],
      [{ x: 0.1, y: 0.1, width: 0.2, height: 0.2, unit: 'furlong' }, 'unit'],
    ];
    for (const [body, field] of cases) {
      const res = await put(body).expect(400);
      expect(errorBodySchema.parse(res.body).error.details.map((d) => d.path), JSON.stringify(body)).toContain(field);
    }
    expect(await DisplayRegionRow.count({ where: { clipId } })).toBe(0);
  });

  it('is the builder’s own: another builder is told the clip is not there', async () => {
    await other.put(`/api/clips/${clipId}/display-region`).set('x-csrf-token', otherToken).send(DISPLAY_REGION).expect(404);
    expect(await DisplayRegionRow.count({ where: { clipId } })).toBe(0);
  });
});

describe('a display read', () => {
  it('is not done until the display is read, then suggests each figure shown half a second or more, at its time', async () => {
    expect((await suggestionsOf()).displayRegion).toBeNull();
    await builder.put(`/api/clips/${clipId}/display-region`).set('x-csrf-token', token).send({ ...DISPLAY_REGION, unit: 'in' }).expect(204);
    // The contract: `done` only once the display reading asked for has finished.
    const right = await suggestionsOf();
    expect(['queued', 'running']).toContain(right.state);
    expect(right.displayRegion).toMatchObject({ ...DISPLAY_REGION, unit: 'in' });

    const body = await waitForDisplay();
    expect(body.state).toBe('done');
    expect(body.displayRegion?.state).toBe('done');
    const shown = fromDisplay(body);
    expect(shown.map((s) => s.kind === 'direct' && s.value), JSON.stringify(shown)).toEqual(['0.5642', '0.5596']);
    for (const [s, f] of [
      [shown[0]!, SHOWN[0]],
      [shown[1]!, SHOWN[2]],
    ] as const) {
      expect(s).toMatchObject({ source: 'display', kind: 'direct', unit: 'in', text: f.text, unitHeard: false, dismissed: false });
      // Frames are taken ten a second: the figure's first still frame is within a frame or two of its appearance.
      expect(Math.abs(s.atMs - f.fromS * 1000)).toBeLessThanOrEqual(200);
      expect(Math.abs(s.endMs - f.toS * 1000)).toBeLessThanOrEqual(200);
      expect(s.confidence).toBeGreaterThan(0.5);
      expect(s.id).toMatch(/^d\d+-0$/);
    }
  }, 120_000);

  it('is dismissed and brought back by the builder, as a heard one is', async () => {
    const [first] = fromDisplay(await suggestionsOf());
    const url = `/api/clips/${clipId}/suggestions/${first!.id}/dismiss`;
    await builder.post(url).set('x-csrf-token', token).expect(204);
    expect(fromDisplay(await suggestionsOf()).find((s) => s.id === first!.id)?.dismissed).toBe(true);
    await builder.delete(url).set('x-csrf-token', token).expect(204);
    expect(fromDisplay(await suggestionsOf()).find((s) => s.id === first!.id)?.dismissed).toBe(false);
    // An id of the display the clip does not have is not found.
    await builder.post(`/api/clips/${clipId}/suggestions/d99999-0/dismiss`).set('x-csrf-token', token).expect(404);
  });

  it('is marked logged once a reading near its time holds its figure', async () => {
    const instrument = await builder
      .post('/api/instruments')
      .set('x-csrf-token', token)
      .send({ name: 'Display test micrometer 0–1 in', kind: 'outside-micrometer', unit: 'in', resolution: '0.0001' })
      .expect(201);
    const moment = await builder.post(`/api/clips/${clipId}/moments`).set('x-csrf-token', token).send({ atMs: 6500 }).expect(201);
    const reading = await builder
      .post(`/api/builds/${buildId}/readings`)
      .set('x-csrf-token', token)
      .send({ momentId: moment.body.moment.id, instrumentId: instrument.body.instrument.id, name: 'Journal diameter', takenOn: '2026-12-10', kind: 'direct', value: '0.5596' })
      .expect(201);
    const shown = fromDisplay(await suggestionsOf());
    expect(shown.find((s) => s.text === '0.5596')).toMatchObject({ logged: true, readingId: reading.body.reading.id });
    expect(shown.find((s) => s.text === '0.5642')).toMatchObject({ logged: false });
  });

  it('is read again when the box moves, and forgotten when it is removed', async () => {
    // A box off the display reads nothing.
    await builder.put(`/api/clips/${clipId}/display-region`).set('x-csrf-token', token).send({ x: 0, y: 0, width: 0.2, height: 0.2 }).expect(204);
    const moved = await waitForDisplay();
    expect(moved.state).toBe('done');
    expect(fromDisplay(moved)).toEqual([]);
    await builder.delete(`/api/clips/${clipId}/display-region`).set('x-csrf-token', token).expect(204);
    const gone = await suggestionsOf();
    expect(gone.displayRegion).toBeNull();
    expect(await DisplayValue.count({ where: { clipId } })).toBe(0);
  }, 120_000);
});
