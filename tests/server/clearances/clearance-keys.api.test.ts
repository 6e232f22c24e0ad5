import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { clearanceResponseSchema } from '@shared/clearances/clearance.schema';
import { errorBodySchema } from '@shared/http/error.schema';
import { makeTestClip } from '../../support/clips';
import { sessionFor, type Session } from '../../support/matrix-fixtures';
import { makeReviewFixture, type ReviewFixture } from '../../support/review-fixtures';
import { startTestApp, type TestApp } from '../../support/test-app';

/* Clearance keys: derived from the name and free in the build, or refused with the next free one offered. */

let t: TestApp;
let work: string;
let owner: Session;
let f: ReviewFixture;

const send = (body: object) => owner.agent.post(`/api/builds/${f.buildId}/clearances`).set('x-csrf-token', owner.token).send(body);
const errorOf = (res: { body: unknown }) => errorBodySchema.parse(res.body).error;
const terms = () => [
  { readingId: f.readings.depth.id, sign: 1 },
  { readingId: f.readings.height.id, sign: -1 },
];

beforeAll(async () => {
  work = fs.mkdtempSync(path.join(os.tmpdir(), 'benchproof-clearance-keys-'));
  const clipFile = await makeTestClip({ seconds: 2, format: 'mp4-h264', dir: work });
  t = await startTestApp({}, { jobs: true });
  owner = await sessionFor(t, 'owner');
  f = await makeReviewFixture(owner, { clipFile, title: 'Invented pump, clearance keys (test)' });
}, 180_000);

afterAll(async () => {
  await t?.close();
  fs.rmSync(work, { recursive: true, force: true });
});

describe('clearance keys within a build', () => {
  it('a clearance sent without a key takes its name, with -2, -3 after one the build has', async () => {
    expect(f.clearance.key).toBe('end-float');
    const second = clearanceResponseSchema.parse((await send({ name: 'End float', template: 'end-float', terms: terms() }).expect(201)).body).clearance;
    const third = clearanceResponseSchema.parse((await send({ name: 'End float', template: 'end-float', terms: terms() }).expect(201)).body).clearance;
    expect([second.key, third.key]).toEqual(['end-float-2', 'end-float-3']);
    const named = clearanceResponseSchema.parse((await send({ name: 'Outer rotor to body', template: 'custom', terms: terms() }).expect(201)).body).clearance;
    expect(named.key).toBe('outer-rotor-to-body');
  });

  it('a key sent that another clearance has is refused on key, offering the first free one', async () => {
    const res = await send({ key: 'end-float', name: 'End float again', terms: terms() }).expect(409);
    const error = errorOf(res);
    expect(error.code).toBe('key_taken');
    expect(error.details).toEqual([{ path: 'key', message: 'another clearance of this build has the key "end-float": use "end-float-4", or type another key' }]);
    expect(error.message).toBe('Another clearance of this build already has the key "end-float". Use "end-float-4", or type another key.');
  });

  it('a term whose reading is not in the build is refused on that term, saying what to pick', async () => {
    const res = await send({ name: 'Stray', terms: [{ readingId: f.readings.depth.id, sign: 1 }, { readingId: 2_000_000_000, sign: -1 }] }).expect(400);
    const error = errorOf(res);
    expect(error.details).toEqual([{ path: 'terms.1.readingId', message: 'not a reading of this build: pick one of its readings' }]);
    expect(error.message).toBe('Pick readings of this build: term 2 is not one of them.');
  });
});
