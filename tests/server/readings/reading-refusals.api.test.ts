import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { errorBodySchema } from '@shared/http/error.schema';
import { readingResponseSchema } from '@shared/readings/reading.schema';
import { makeTestClip } from '../../support/clips';
import { sessionFor, type Session } from '../../support/matrix-fixtures';
import { makeReviewFixture, type ReviewFixture } from '../../support/review-fixtures';
import { startTestApp, type TestApp } from '../../support/test-app';

/*
 * What the API says when it refuses a reading: the field paths stay the API's (`passes`,
 * `stops`), the words are the form's ("the blade that enters", "does not") and say what to do.
 */

let t: TestApp;
let work: string;
let owner: Session;
let f: ReviewFixture;
let blades: number;

const send = (verb: 'post' | 'patch', url: string, body: object) => owner.agent[verb](url).set('x-csrf-token', owner.token).send(body);
const errorOf = (res: { body: unknown }) => errorBodySchema.parse(res.body).error;
const log = (body: Record<string, unknown>) =>
  send('post', `/api/builds/${f.buildId}/readings`, { momentId: f.momentIds[0], takenOn: '2026-11-20', ...body });

beforeAll(async () => {
  work = fs.mkdtempSync(path.join(os.tmpdir(), 'benchproof-reading-refusals-'));
  const clipFile = await makeTestClip({ seconds: 2, format: 'mp4-h264', dir: work });
  t = await startTestApp({}, { jobs: true });
  owner = await sessionFor(t, 'owner');
  f = await makeReviewFixture(owner, { clipFile, title: 'Invented pump, refusal words (test)' });
  const res = await send('post', '/api/instruments', {
    name: 'Feeler blades 0.0015–0.025 in (test)',
    kind: 'feeler-blades',
    serial: 'INV-FB',
    unit: 'in',
    resolution: '0.0005',
    lastCalibratedOn: '2026-01-05',
    calibrationIntervalDays: 3650,
  }).expect(201);
  blades = res.body.instrument.id as number;
}, 180_000);

afterAll(async () => {
  await t?.close();
  fs.rmSync(work, { recursive: true, force: true });
});

describe('a refused reading is told in the words of the form', () => {
  it('a bracket whose "does not enter" blade is thinner: on stops, naming both blades, and the same sentence on top', async () => {
    const res = await log({ instrumentId: blades, name: 'Outer rotor to body', kind: 'bracket', passes: '0.004', stops: '0.003' }).expect(400);
    const error = errorOf(res);
    const sentence = 'The blade that does not enter must be thicker than the one that enters (0.004 in enters, 0.003 in does not).';
    expect(error.details).toEqual([{ path: 'stops', message: sentence }]);
    expect(error.message).toBe(sentence);
  });

  it('blades in two units: on stops, saying which unit each blade is in', async () => {
    const res = await log({ instrumentId: blades, name: 'Outer rotor to body', kind: 'bracket', passes: '3 thou', stops: '0.10 mm' }).expect(400);
    expect(errorOf(res).details).toEqual([{ path: 'stops', message: 'Give both blades in the same unit: this one is in mm, the blade that enters is in thou.' }]);
  });

  it('a blade sent with one indication: on passes, saying which choice has it', async () => {
    const res = await log({ instrumentId: f.instruments.mic, name: 'Rotor height', kind: 'direct', value: '0.5595', passes: '0.003' }).expect(400);
    expect(errorOf(res).details).toEqual([
      { path: 'passes', message: '“One indication” has no box for the blade that enters: leave it out, or choose “Feeler bracket”.' },
    ]);
  });

  it('a changed bracket that now runs backwards is refused the same way on an edit', async () => {
    const created = await log({ instrumentId: blades, momentId: f.momentIds[1], name: 'Rotor tip gap', kind: 'bracket', passes: '0.002', stops: '0.003' }).expect(201);
    const reading = readingResponseSchema.parse(created.body).reading;
    const res = await send('patch', `/api/readings/${reading.id}`, { lockVersion: reading.lockVersion, stops: '0.0015' }).expect(400);
    expect(errorOf(res).details).toEqual([
      { path: 'stops', message: 'The blade that does not enter must be thicker than the one that enters (0.002 in enters, 0.0015 in does not).' },
    ]);
  });

  it('a part of no build of ours says what to choose instead', async () => {
    const res = await log({ instrumentId: f.instruments.mic, partId: 2_000_000_000, name: 'Rotor height', kind: 'direct', value: '0.5595' }).expect(400);
    expect(errorOf(res).details).toEqual([{ path: 'partId', message: 'that is not a part of this build: choose one of its parts, or “Not tied to a part”' }]);
  });
});

describe('a reading key that is taken', () => {
  it('is refused with the next free key offered, and a reading named the same gets that key', async () => {
    const res = await log({ instrumentId: f.instruments.depth, key: 'bore-depth', name: 'Bore depth', kind: 'direct', value: '0.5643' }).expect(409);
    const error = errorOf(res);
    expect(error.code).toBe('key_taken');
    expect(error.details).toEqual([{ path: 'key', message: 'another reading of this build has the key "bore-depth": use "bore-depth-2", or type another key' }]);
    const named = await log({ instrumentId: f.instruments.depth, name: 'Bore depth', kind: 'direct', value: '0.5643' }).expect(201);
    expect(readingResponseSchema.parse(named.body).reading.key).toBe('bore-depth-2');
  });
});
