import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import Papa from 'papaparse';
import type { InferCreationAttributes } from 'sequelize';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { WebVTTParser, type Entity } from 'webvtt-parser';
import htmlEntities from 'webvtt-parser/html-entities.json';
import { errorBodySchema } from '@shared/http/error.schema';
import {
  readingCsvColumns,
  readingHistoryResponseSchema,
  readingListResponseSchema,
  readingResponseSchema,
  type Reading as ReadingDto,
} from '@shared/readings/reading.schema';
import { Instrument, ZeroCheck } from '../../../server/features/instruments/instrument.model';
import { Moment } from '../../../server/features/clips/clip.model';
import { Reading, ReadingRevision } from '../../../server/features/readings/reading.model';
import { Story } from '../../../server/features/stories/story.model';
import { makeTestClip } from '../../support/clips';
import { sessionFor, uploadClip, waitUntilReady, type Session } from '../../support/matrix-fixtures';
import { startTestApp, type TestApp } from '../../support/test-app';

const SQRT3 = Math.sqrt(3);

let t: TestApp;
let work: string;
let clipFile: string;
let owner: Session;
let other: Session;
let moderator: Session;
let follower: Session;
let admin: Session;
let anonymous: Session;
let ownerId: number;
let otherId: number;
let buildId: number;
let pumpPartId: number;
let crankPartId: number;
let clipId: number;
let spareClipId: number;
let otherBuildMomentId: number;
const moments: number[] = [];
const inst = {} as Record<'mic' | 'depth' | 'blades' | 'dti' | 'retired' | 'overdue' | 'uncalibrated' | 'othersMic' | 'mmMic', number>;

const send = (s: Session, verb: 'post' | 'patch' | 'delete' | 'put', url: string, body?: object) => {
  const req = s.agent[verb](url).set('x-csrf-token', s.token);
  return body === undefined ? req : req.send(body);
};
const fieldOf = (res: { body: unknown }) => errorBodySchema.parse(res.body).error.details[0]?.path;
const codeOf = (res: { body: unknown }) => errorBodySchema.parse(res.body).error.code;

async function me(s: Session): Promise<number> {
  return (await s.agent.get('/api/me').expect(200)).body.user.id as number;
}

async function addMoment(s: Session, clip: number, atMs: number, label: string): Promise<number> {
  const res = await send(s, 'post', `/api/clips/${clip}/moments`, { atMs, label }).expect(201);
  return res.body.moment.id as number;
}

async function instrument(ownerIdOf: number, fields: Partial<InferCreationAttributes<Instrument>> & Pick<Instrument, 'name' | 'kind' | 'unit' | 'resolution'>) {
  const i = await Instrument.create({
    ownerId: ownerIdOf,
    lastCalibratedOn: '2026-01-05',
    calibrationIntervalDays: 3650,
    calibratedBy: 'Invented test lab',
    ...fields,
  });
  return i.id;
}

function log(body: Record<string, unknown>, s: Session = owner, build = buildId) {
  return send(s, 'post', `/api/builds/${build}/readings`, { momentId: moments[0], takenOn: '2026-11-20', ...body });
}

async function logged(body: Record<string, unknown>): Promise<ReadingDto> {
  const res = await log(body);
  if (res.status !== 201) throw new Error(`reading refused: ${res.status} ${JSON.stringify(res.body)}`);
  return readingResponseSchema.parse(res.body).reading;
}

beforeAll(async () => {
  work = fs.mkdtempSync(path.join(os.tmpdir(), 'benchproof-readings-api-'));
  clipFile = await makeTestClip({ seconds: 3, format: 'mp4-h264', dir: work });
  t = await startTestApp({}, { jobs: true });
  [owner, other, moderator, follower, admin, anonymous] = await Promise.all([
    sessionFor(t, 'owner'),
    sessionFor(t, 'otherBuilder'),
    sessionFor(t, 'moderator'),
    sessionFor(t, 'follower'),
    sessionFor(t, 'admin'),
    sessionFor(t, 'anonymous'),
  ]);
  [ownerId, otherId] = await Promise.all([me(owner), me(other)]);

  const build = await send(owner, 'post', '/api/builds', {
    title: 'Invented flat-twin oil pump (test)',
    subject: 'invented engine for reading tests',
    parts: [
      { name: 'Oil pump', serial: 'TP-0417' },
      { name: 'Crankshaft', serial: 'TC-2291' },
    ],
  }).expect(201);
  buildId = build.body.build.id;
  [pumpPartId, crankPartId] = build.body.build.parts.map((p: { id: number }) => p.id);
  const second = await send(owner, 'post', '/api/builds', { title: 'Another invented build (test)' }).expect(201);

  [clipId, spareClipId] = await Promise.all([uploadClip(owner, buildId, clipFile), uploadClip(owner, buildId, clipFile)]);
  const secondClip = await uploadClip(owner, second.body.build.id, clipFile);
  await Promise.all([clipId, spareClipId, secondClip].map((id) => waitUntilReady(owner, id)));
  for (const [i, label] of ['Bore depth on the micrometer', 'Rotor height', 'Blades at the rotor tip', 'Dial on the journal', 'Nothing logged here'].entries()) {
    moments.push(await addMoment(owner, clipId, 400 + i * 500, label));
  }
  otherBuildMomentId = await addMoment(owner, secondClip, 500, 'A moment in another build');

  inst.mic = await instrument(ownerId, { name: 'Test 0–1 in outside micrometer', kind: 'outside-micrometer', unit: 'in', resolution: '0.0001' });
  inst.depth = await instrument(ownerId, { name: 'Test depth micrometer', kind: 'depth-micrometer', unit: 'in', resolution: '0.0001', statedUncertainty: '0.00005' });
  inst.blades = await instrument(ownerId, { name: 'Test feeler blades', kind: 'feeler-blades', unit: 'in', resolution: '0.001' });
  inst.dti = await instrument(ownerId, { name: 'Test dial indicator', kind: 'dial-test-indicator', unit: 'mm', resolution: '0.001' });
  inst.mmMic = await instrument(ownerId, { name: 'Test 25–50 mm micrometer', kind: 'outside-micrometer', unit: 'mm', resolution: '0.001' });
  inst.retired = await instrument(ownerId, { name: 'Test retired caliper', kind: 'caliper', unit: 'mm', resolution: '0.01', retired: true });
  inst.overdue = await instrument(ownerId, { name: 'Test overdue micrometer', kind: 'outside-micrometer', unit: 'in', resolution: '0.0001', lastCalibratedOn: '2020-01-01', calibrationIntervalDays: 365 });
  inst.uncalibrated = await instrument(ownerId, { name: 'Test straight edge', kind: 'straight-edge', unit: 'in', resolution: '0.001', lastCalibratedOn: null, calibrationIntervalDays: null });
  inst.othersMic = await instrument(otherId, { name: "Another builder's micrometer", kind: 'outside-micrometer', unit: 'mm', resolution: '0.001' });
  // On 2026-11-20 the micrometer read 0.0001 in on its closed anvil: that day's readings lose 0.0001 in.
  await ZeroCheck.create({ instrumentId: inst.mic, checkedOn: '2026-11-20', unit: 'in', standardSize: '0', shown: '0.0001', momentId: null, createdBy: ownerId });
}, 240_000);

afterAll(async () => {
  await t?.close();
  if (work) fs.rmSync(work, { recursive: true, force: true });
});

describe('logging a reading at a moment', () => {
  it('stores a direct reading as typed and works it out with the instrument and that day\'s zero check', async () => {
    const res = await log({ instrumentId: inst.mic, partId: pumpPartId, name: 'Bore depth, as supplied', kind: 'direct', value: '0.5643"' }).expect(201);
    const reading = readingResponseSchema.parse(res.body).reading;
    expect(reading).toMatchObject({
      key: 'bore-depth-as-supplied',
      kind: 'direct',
      unit: 'in',
      value: '0.5643',
      entered: { value: '0.5643"' },
      partName: 'Oil pump',
      clipId,
      atMs: 400,
      frameUrl: `/api/clips/${clipId}/frame?t=0.400`,
      reviewState: 'unchecked',
      zeroCheck: { offset: '0.0001', unit: 'in' },
      // Figures go to the engine as stored text, so their trailing zeros are kept.
      engine: { kind: 'direct', value: '0.5643', unit: 'in', resolution: '0.0001', zeroOffset: '0.0001' },
      warnings: [],
      lockVersion: 1,
    });
    // 0.5643 in − 0.0001 in zero offset = 0.5642 in, a correction for a known systematic effect
    // (JCGM 100:2008, 3.2.4); 0.5642 × 25.4 = 14 330.68 µm exactly (NIST SP 811, B.8).
    expect(reading.result.valueUm).toBe(14_330.68);
    expect(reading.result.display).toBe('0.5642 in');
    // Resolution 0.0001 in = 2.54 µm: u = 2.54/(2√3) µm (JCGM 100:2008, F.2.2.1), once for the
    // reading and once for the zero check's own reading, which is subtracted (3.2.4, eq. 10).
    expect(reading.result.standardUncertaintyUm).toBeCloseTo(Math.SQRT2 * (2.54 / (2 * SQRT3)), 12);
    const row = (await Reading.findByPk(reading.id))!;
    expect(row.value).toBe('0.5643');
  });

  it('derives -2 for a second reading of the same name, and refuses a key that is taken', async () => {
    const again = await logged({ instrumentId: inst.mic, name: 'Bore depth, as supplied', kind: 'direct', value: '0.5644' });
    expect(again.key).toBe('bore-depth-as-supplied-2');
    const taken = await log({ instrumentId: inst.mic, key: 'bore-depth-as-supplied', name: 'x', kind: 'direct', value: '0.5644' }).expect(409);
    expect(codeOf(taken)).toBe('key_taken');
    expect(fieldOf(taken)).toBe('key');
  });

  it('combines a stated uncertainty, and warns when a zero-checked instrument has no check that day', async () => {
    const reading = await logged({ momentId: moments[1], instrumentId: inst.depth, name: 'Rotor height', kind: 'direct', value: '0.5595' });
    expect(reading.warnings.map((w) => w.code)).toEqual(['no-zero-check']);
    expect(reading.zeroCheck).toBeNull();
    // u = √((2.54/(2√3))² + (0.00005 in = 1.27 µm)²) (JCGM 100:2008, eq. (10)).
    expect(reading.result.standardUncertaintyUm).toBeCloseTo(Math.hypot(2.54 / (2 * SQRT3), 1.27), 12);
  });

  it('takes today (UTC) when no day is sent', async () => {
    const res = await send(owner, 'post', `/api/builds/${buildId}/readings`, { momentId: moments[1], instrumentId: inst.depth, name: 'Undated', kind: 'direct', value: '0.5595' }).expect(201);
    expect(res.body.reading.takenOn).toBe(new Date().toISOString().slice(0, 10));
  });

  it('puts a feeler gap at the midpoint of its bracket with u = a/√3', async () => {
    const reading = await logged({ momentId: moments[2], instrumentId: inst.blades, name: 'Rotor tip gap', kind: 'bracket', passes: '0.003', stops: '0.004 in' });
    // Midpoint (0.003 + 0.004)/2 = 0.0035 in = 88.9 µm; a = 0.0005 in = 12.7 µm;
    // u = a/√3 (JCGM 100:2008, 4.3.7).
    expect(reading.result.valueUm).toBe(88.9);
    expect(reading.result.standardUncertaintyUm).toBeCloseTo(12.7 / SQRT3, 12);
    expect(reading.result.display).toBe('0.0035 in');
    expect(reading.zeroCheck).toBeNull();
  });

  it('subtracts the day\'s zero offset from the mean of a repeated reading', async () => {
    const reading = await logged({ instrumentId: inst.mic, partId: crankPartId, name: 'Journal', kind: 'repeated', values: ['0.5641', '0.5643 in', '0.5642'] });
    expect(reading.values).toEqual(['0.5641', '0.5643', '0.5642']);
    // Mean 0.5642 in − 0.0001 in = 0.5641 in = 14 328.14 µm (JCGM 100:2008, 3.2.4; 1 in = 25.4 mm).
    expect(reading.result.valueUm).toBe(14_328.14);
    expect(reading.result.steps.join('\n')).toMatch(/zero check read 0\.0001 in; subtracted: 0\.56420 in − 0\.0001 in = 0\.56410 in/);
  });

  it('reads a dial indicator below zero and converts a typed inch value exactly where it can', async () => {
    const dial = await logged({ momentId: moments[3], instrumentId: inst.dti, name: 'Runout at the journal', kind: 'direct', value: '-0.012' });
    expect(dial).toMatchObject({ unit: 'mm', value: '-0.012' });
    expect(dial.result.valueUm).toBe(-12);
    const converted = await logged({ momentId: moments[3], instrumentId: inst.mmMic, name: 'Converted', kind: 'direct', value: '0.9843 in' });
    expect(converted.warnings.map((w) => w.code)).toEqual(['no-zero-check', 'resolution-converted']);
  });

  it('warns about an overdue calibration and about no calibration record', async () => {
    const overdue = await logged({ instrumentId: inst.overdue, name: 'Overdue check', kind: 'direct', value: '0.5000' });
    expect(overdue.warnings.map((w) => w.code)).toContain('calibration-overdue');
    const none = await logged({ instrumentId: inst.uncalibrated, name: 'Straight edge gap', kind: 'bracket', passes: '0.001', stops: '0.002' });
    expect(none.warnings.map((w) => w.code)).toEqual(['no-calibration-record']);
  });
});

describe('refusals name the field', () => {
  it.each([
    ['a negative gap', { instrumentId: 0, kind: 'bracket', passes: '-0.002', stops: '0.003' }, 'passes'],
    ['a bracket that runs backwards', { instrumentId: 0, kind: 'bracket', passes: '0.004', stops: '0.003' }, 'stops'],
    ['a bracket whose blades are equal', { instrumentId: 0, kind: 'bracket', passes: '0.004', stops: '0.0040' }, 'stops'],
    ['a unit the engine cannot read', { instrumentId: 0, kind: 'bracket', passes: '0.003', stops: '0.004 cubits' }, 'stops'],
    ['figures in two units', { instrumentId: 0, kind: 'bracket', passes: '0.003 in', stops: '0.10 mm' }, 'stops'],
  ])('%s', async (_label, body, field) => {
    const res = await log({ ...body, instrumentId: inst.blades, name: 'Refused gap' }).expect(400);
    expect(fieldOf(res)).toBe(field);
  });

  it('a negative size from a micrometer', async () => {
    expect(fieldOf(await log({ instrumentId: inst.mic, name: 'Negative', kind: 'direct', value: '-0.0005' }).expect(400))).toBe('value');
  });

  it('a moment of another build', async () => {
    expect(fieldOf(await log({ momentId: otherBuildMomentId, instrumentId: inst.mic, name: 'Wrong moment', kind: 'direct', value: '0.5' }).expect(400))).toBe('momentId');
  });

  it('a moment past the end of the clip (refused when the moment is marked)', async () => {
    expect(fieldOf(await send(owner, 'post', `/api/clips/${clipId}/moments`, { atMs: 60_000, label: 'too late' }).expect(400))).toBe('atMs');
  });

  it("another builder's instrument, and a retired one", async () => {
    expect(fieldOf(await log({ instrumentId: inst.othersMic, name: 'Borrowed', kind: 'direct', value: '25.012' }).expect(400))).toBe('instrumentId');
    expect(fieldOf(await log({ instrumentId: inst.retired, name: 'Retired', kind: 'direct', value: '25.01' }).expect(400))).toBe('instrumentId');
  });

  it('a part of another build, a temperature without a material, and a missing figure', async () => {
    expect(fieldOf(await log({ instrumentId: inst.mic, partId: 999_999, name: 'No part', kind: 'direct', value: '0.5' }).expect(400))).toBe('partId');
    expect(fieldOf(await log({ instrumentId: inst.mic, name: 'Warm', kind: 'repeated', values: ['0.5', '0.5'], temperatureC: 30 }).expect(400))).toBe('material');
    expect(fieldOf(await log({ instrumentId: inst.blades, name: 'Half', kind: 'bracket', passes: '0.003' }).expect(400))).toBe('stops');
  });
});

describe('a repeated reading keeps its temperature', () => {
  it('is corrected to 20 °C like one indication (ISO 1), the temperature stored and shown', async () => {
    const warm = await logged({ instrumentId: inst.mic, name: 'Warm repeated', kind: 'repeated', values: ['0.5000', '0.5002'], temperatureC: 30, material: 'steel' });
    expect(warm.temperatureC).toBe(30);
    expect(warm.engine).toMatchObject({ kind: 'repeated', temperatureC: 30, material: 'steel' });
    // Carbon steel, 11.7e-6 /K (the engine's material table); the micrometer at 20 °C, so
    // L20 = L / (1 + α·(30 − 20) K) (GUM H.1), with L the mean 0.5001 in less the day's zero offset (1 in = 25.4 mm).
    const offset = warm.zeroCheck ? Number(warm.zeroCheck.offset) : 0;
    expect(warm.result.valueUm).toBeCloseTo(((0.5001 - offset) * 25_400) / (1 + 11.7e-6 * 10), 6);
    expect(warm.result.steps.join(' ')).toMatch(/20 °C/);
  });
});

describe('who may read and change readings', () => {
  let reading: ReadingDto;
  beforeAll(async () => {
    reading = await logged({ instrumentId: inst.mic, name: 'Access check', kind: 'direct', value: '0.5001' });
  });

  it('another builder gets 404 for everything, as if there were nothing there', async () => {
    await other.agent.get(`/api/builds/${buildId}/readings`).expect(404);
    await other.agent.get(`/api/builds/${buildId}/readings.csv`).expect(404);
    await other.agent.get(`/api/readings/${reading.id}`).expect(404);
    await other.agent.get(`/api/readings/${reading.id}/history`).expect(404);
    await send(other, 'patch', `/api/readings/${reading.id}`, { lockVersion: 1, note: 'mine now' }).expect(404);
    await send(other, 'delete', `/api/readings/${reading.id}`).expect(404);
    await log({ instrumentId: inst.othersMic, name: 'Intruder', kind: 'direct', value: '1' }, other).expect(404);
  });

  it('a moderator reads everything but cannot change anything (403)', async () => {
    await moderator.agent.get(`/api/builds/${buildId}/readings`).expect(200);
    await moderator.agent.get(`/api/readings/${reading.id}`).expect(200);
    await moderator.agent.get(`/api/readings/${reading.id}/history`).expect(200);
    await moderator.agent.get(`/api/builds/${buildId}/readings.csv`).expect(200);
    await send(moderator, 'patch', `/api/readings/${reading.id}`, { lockVersion: 1, note: 'x' }).expect(403);
    await send(moderator, 'delete', `/api/readings/${reading.id}`).expect(403);
    await log({ instrumentId: inst.mic, name: 'x', kind: 'direct', value: '1' }, moderator).expect(403);
  });

  it('a follower cannot log (403) or see (404) a draft build\'s readings; a visitor is asked to sign in', async () => {
    await log({ instrumentId: inst.mic, name: 'x', kind: 'direct', value: '1' }, follower).expect(403);
    await follower.agent.get(`/api/readings/${reading.id}`).expect(404);
    await anonymous.agent.get(`/api/readings/${reading.id}`).expect(401);
    await anonymous.agent.get(`/api/builds/${buildId}/readings`).expect(401);
  });

  it('an admin reads, cannot edit in the builder\'s name (403), and may take a reading down', async () => {
    await admin.agent.get(`/api/readings/${reading.id}`).expect(200);
    await send(admin, 'patch', `/api/readings/${reading.id}`, { lockVersion: 1, note: 'x' }).expect(403);
    await send(admin, 'delete', `/api/readings/${reading.id}`).expect(204);
    await owner.agent.get(`/api/readings/${reading.id}`).expect(404);
  });
});

describe('editing a reading', () => {
  it('two tabs: the second save from the same version is refused, stores nothing, and history keeps the first', async () => {
    const reading = await logged({ instrumentId: inst.mic, name: 'Two tabs', kind: 'direct', value: '0.5643' });
    const tabA = await owner.agent.get(`/api/readings/${reading.id}`).expect(200);
    const tabB = await owner.agent.get(`/api/readings/${reading.id}`).expect(200);
    expect(tabA.body.reading.lockVersion).toBe(1);
    const saved = await send(owner, 'patch', `/api/readings/${reading.id}`, { lockVersion: tabA.body.reading.lockVersion, value: '0.5645' }).expect(200);
    expect(saved.body.reading).toMatchObject({ value: '0.5645', lockVersion: 2, entered: { value: '0.5645' } });
    const refused = await send(owner, 'patch', `/api/readings/${reading.id}`, { lockVersion: tabB.body.reading.lockVersion, note: 'from tab B' }).expect(409);
    expect(codeOf(refused)).toBe('edit_conflict');
    expect(fieldOf(refused)).toBe('lockVersion');
    const now = (await Reading.findByPk(reading.id))!;
    expect([now.note, now.value, now.lockVersion]).toEqual(['', '0.5645', 2]);
    const history = readingHistoryResponseSchema.parse((await owner.agent.get(`/api/readings/${reading.id}/history`).expect(200)).body);
    expect(history.items).toHaveLength(1);
    expect(history.items[0]).toMatchObject({ lockVersion: 1, changedBy: ownerId, snapshot: { value: '0.5643', lockVersion: 1 } });
    expect(history.items[0]!.changedByName.length).toBeGreaterThan(0);
  });

  it('keeps every earlier state, newest first', async () => {
    const reading = await logged({ instrumentId: inst.mic, name: 'Edited twice', kind: 'direct', value: '0.5000' });
    await send(owner, 'patch', `/api/readings/${reading.id}`, { lockVersion: 1, value: '0.5001' }).expect(200);
    await send(owner, 'patch', `/api/readings/${reading.id}`, { lockVersion: 2, name: 'Edited twice, renamed' }).expect(200);
    const history = readingHistoryResponseSchema.parse((await owner.agent.get(`/api/readings/${reading.id}/history`).expect(200)).body);
    expect(history.items.map((i) => [i.lockVersion, i.snapshot.value, i.snapshot.name])).toEqual([
      [2, '0.5001', 'Edited twice'],
      [1, '0.5000', 'Edited twice'],
    ]);
  });

  it('re-checks the figures against a new instrument, and sends a checked reading back to unchecked', async () => {
    const dial = await logged({ momentId: moments[3], instrumentId: inst.dti, name: 'Dial, moved', kind: 'direct', value: '-0.004' });
    const refused = await send(owner, 'patch', `/api/readings/${dial.id}`, { lockVersion: 1, instrumentId: inst.mmMic }).expect(400);
    expect(fieldOf(refused)).toBe('value');
    expect((await Reading.count({ where: { id: dial.id, lockVersion: 1 } }))).toBe(1);
    expect(await ReadingRevision.count({ where: { readingId: dial.id } })).toBe(0);

    await Reading.update({ reviewState: 'checked' }, { where: { id: dial.id } });
    const unchanged = await send(owner, 'patch', `/api/readings/${dial.id}`, { lockVersion: 1, note: 'only a note' }).expect(200);
    expect(unchanged.body.reading.reviewState).toBe('checked');
    const changed = await send(owner, 'patch', `/api/readings/${dial.id}`, { lockVersion: 2, value: '-0.005' }).expect(200);
    expect(changed.body.reading).toMatchObject({ value: '-0.005', reviewState: 'unchecked' });
  });

  it('changing the kind needs that kind\'s figures, and a figure of another kind is refused by name', async () => {
    const reading = await logged({ instrumentId: inst.blades, momentId: moments[2], name: 'Kind change', kind: 'bracket', passes: '0.002', stops: '0.003' });
    expect(fieldOf(await send(owner, 'patch', `/api/readings/${reading.id}`, { lockVersion: 1, value: '0.002' }).expect(400))).toBe('value');
    expect(fieldOf(await send(owner, 'patch', `/api/readings/${reading.id}`, { lockVersion: 1, stops: '0.001' }).expect(400))).toBe('stops');
    const ok = await send(owner, 'patch', `/api/readings/${reading.id}`, { lockVersion: 1, stops: '0.004' }).expect(200);
    expect(ok.body.reading).toMatchObject({ passes: '0.002', stops: '0.004', entered: { passes: '0.002', stops: '0.004' } });
  });
});

describe('removing a reading', () => {
  it('is refused while a clearance uses it, and while a story cites it', async () => {
    const used = await logged({ instrumentId: inst.mic, name: 'Used in a clearance', kind: 'direct', value: '0.5600' });
    const clearance = await send(owner, 'post', `/api/builds/${buildId}/clearances`, { name: 'Uses it', terms: [{ readingId: used.id, sign: 1 }] }).expect(201);
    const inUse = await send(owner, 'delete', `/api/readings/${used.id}`).expect(409);
    expect(codeOf(inUse)).toBe('reading_in_use');
    expect(errorBodySchema.parse(inUse.body).error.message).toContain('Uses it');
    await send(owner, 'delete', `/api/clearances/${clearance.body.clearance.id}`).expect(204);

    const cited = await logged({ instrumentId: inst.mic, name: 'Cited in a story', kind: 'direct', value: '0.5601' });
    await Story.create({ buildId, title: 'Pump strip-down (test)', body: `The bore was [deep enough](reading:${cited.key}).`, createdBy: ownerId, updatedBy: ownerId });
    const refused = await send(owner, 'delete', `/api/readings/${cited.id}`).expect(409);
    expect(codeOf(refused)).toBe('reading_cited');
    expect(errorBodySchema.parse(refused.body).error.message).toContain('Pump strip-down (test)');
    const rekey = await send(owner, 'patch', `/api/readings/${cited.id}`, { lockVersion: 1, key: 'renamed-key' }).expect(409);
    expect(codeOf(rekey)).toBe('reading_cited');
  });

  it('a key with an underscore is not matched by a look-alike citation', async () => {
    const reading = await logged({ instrumentId: inst.mic, key: 'gap_a', name: 'Underscore key', kind: 'direct', value: '0.5602' });
    await Story.create({ buildId, title: 'Look-alike (test)', body: 'See [this](reading:gapxa).', createdBy: ownerId, updatedBy: ownerId });
    await send(owner, 'delete', `/api/readings/${reading.id}`).expect(204);
  });

  it('otherwise goes, with its history', async () => {
    const reading = await logged({ instrumentId: inst.mic, name: 'Short-lived', kind: 'direct', value: '0.5603' });
    await send(owner, 'patch', `/api/readings/${reading.id}`, { lockVersion: 1, note: 'edited once' }).expect(200);
    await send(owner, 'delete', `/api/readings/${reading.id}`).expect(204);
    await owner.agent.get(`/api/readings/${reading.id}`).expect(404);
    expect(await ReadingRevision.count({ where: { readingId: reading.id } })).toBe(0);
  });

  it('a part that readings use cannot be removed from the build', async () => {
    const build = (await owner.agent.get(`/api/builds/${buildId}`).expect(200)).body.build;
    const withoutCrank = build.parts.filter((p: { id: number }) => p.id !== crankPartId);
    const refused = await send(owner, 'patch', `/api/builds/${buildId}`, { parts: withoutCrank }).expect(409);
    expect(codeOf(refused)).toBe('part_in_use');
    expect(errorBodySchema.parse(refused.body).error.message).toContain('Crankshaft');
    const after = (await owner.agent.get(`/api/builds/${buildId}`).expect(200)).body.build;
    expect(after.parts.map((p: { id: number }) => p.id)).toContain(crankPartId);
  });
});

describe('listing readings', () => {
  it('pages by keyset on id and filters by part, instrument, clip and review state', async () => {
    const all = readingListResponseSchema.parse((await owner.agent.get(`/api/builds/${buildId}/readings`).expect(200)).body);
    expect(all.nextAfter).toBeNull();
    const ids = all.items.map((r) => r.id);
    expect(ids).toEqual([...ids].sort((a, b) => a - b));
    const first = readingListResponseSchema.parse((await owner.agent.get(`/api/builds/${buildId}/readings?limit=2`).expect(200)).body);
    expect(first.items.map((r) => r.id)).toEqual(ids.slice(0, 2));
    expect(first.nextAfter).toBe(ids[1]);
    const next = readingListResponseSchema.parse((await owner.agent.get(`/api/builds/${buildId}/readings?limit=2&after=${first.nextAfter}`).expect(200)).body);
    expect(next.items.map((r) => r.id)).toEqual(ids.slice(2, 4));

    const byPart = (await owner.agent.get(`/api/builds/${buildId}/readings?partId=${pumpPartId}`).expect(200)).body.items as ReadingDto[];
    expect(byPart.length).toBeGreaterThan(0);
    expect(byPart.every((r) => r.partId === pumpPartId)).toBe(true);
    const byInstrument = (await owner.agent.get(`/api/builds/${buildId}/readings?instrumentId=${inst.blades}`).expect(200)).body.items as ReadingDto[];
    expect(byInstrument.length).toBeGreaterThan(0);
    expect(byInstrument.every((r) => r.instrumentId === inst.blades)).toBe(true);
    expect((await owner.agent.get(`/api/builds/${buildId}/readings?clipId=${spareClipId}`).expect(200)).body.items).toEqual([]);
    expect(((await owner.agent.get(`/api/builds/${buildId}/readings?clipId=${clipId}`).expect(200)).body.items as ReadingDto[]).length).toBe(ids.length);
    await Reading.update({ reviewState: 'flagged' }, { where: { id: ids[0] } });
    const flagged = (await owner.agent.get(`/api/builds/${buildId}/readings?reviewState=flagged`).expect(200)).body.items as ReadingDto[];
    expect(flagged.map((r) => r.id)).toEqual([ids[0]]);
  });

  it('a page costs the same number of queries for 2 readings as for all of them', async () => {
    const sqls: string[] = [];
    const hook = (_options: unknown, query: { sql?: string }) => {
      if (query.sql && /"(readings|moments|instruments|parts|users|zero_checks)"/.test(query.sql)) sqls.push(query.sql);
    };
    t.sequelize.addHook('afterQuery', 'count-reading-queries', hook as never);
    try {
      const count = async (url: string) => {
        sqls.length = 0;
        const res = await owner.agent.get(url).expect(200);
        return { queries: sqls.length, rows: res.body.items.length as number };
      };
      const small = await count(`/api/builds/${buildId}/readings?limit=2`);
      const large = await count(`/api/builds/${buildId}/readings?limit=1000`);
      expect(small.rows).toBe(2);
      expect(large.rows).toBeGreaterThan(10);
      expect(small.queries).toBeGreaterThan(3);
      expect(large.queries).toBe(small.queries);
    } finally {
      t.sequelize.removeHook('afterQuery', 'count-reading-queries');
    }
  });
});

describe('the CSV export', () => {
  it('round-trips: every figure parsed back equals what is stored, and hostile text comes back defused', async () => {
    const hostile = '=HYPERLINK("http://example.invalid/steal","click")';
    await logged({ momentId: moments[1], instrumentId: inst.mic, name: hostile, kind: 'direct', value: '0.5590', note: '@SUM(A1:A9), then\na second line' });
    await logged({ momentId: moments[1], instrumentId: inst.mic, name: '+cmd|calc', kind: 'repeated', values: ['0.5591', '0.5592'], note: '-2+3' });

    const res = await owner.agent.get(`/api/builds/${buildId}/readings.csv`).expect(200);
    expect(res.headers['content-type']).toBe('text/csv; charset=utf-8');
    expect(res.headers['content-disposition']).toBe(`attachment; filename="build-${buildId}-readings.csv"`);
    const parsed = Papa.parse<Record<string, string>>(res.text, { header: true, skipEmptyLines: true });
    expect(parsed.errors).toEqual([]);
    expect(parsed.meta.fields).toEqual([...readingCsvColumns]);

    const stored = await Reading.findAll({ where: { buildId }, order: [['id', 'ASC']] });
    expect(parsed.data).toHaveLength(stored.length);
    const defuse = (text: string) => (/^[=+\-@\t\r]/.test(text) && !/^[+-]?(\d+(\.\d*)?|\.\d+)$/.test(text) ? `'${text}` : text);
    for (const [i, row] of parsed.data.entries()) {
      const r = stored[i]!;
      expect(row.key).toBe(r.key);
      expect(row.name).toBe(defuse(r.name));
      expect(row.kind).toBe(r.kind);
      expect(row.unit).toBe(r.unit);
      expect(row.value).toBe(r.value ?? '');
      expect(row.passes).toBe(r.passes ?? '');
      expect(row.stops).toBe(r.stops ?? '');
      expect(row.values).toBe(r.repeatedValues ? r.repeatedValues.join(' ') : '');
      expect(row.taken_on).toBe(r.takenOn);
      expect(row.note).toBe(defuse(r.note));
    }
    const hostileRow = parsed.data.find((row) => row.name?.includes('HYPERLINK'))!;
    expect(hostileRow.name).toBe(`'${hostile}`);
    expect(hostileRow.note).toBe("'@SUM(A1:A9), then\na second line");
    expect(parsed.data.find((row) => row.note === "'-2+3")?.name).toBe("'+cmd|calc");
    // A negative figure is a number, not a formula: left as it is.
    const dialRow = parsed.data.find((row) => row.key === 'runout-at-the-journal')!;
    expect(dialRow).toMatchObject({ value: '-0.012', estimate: '-0.012', unit: 'mm' });
    // The estimate is the engine's (zero offset applied): 0.5643 − 0.0001 = 0.5642 in (JCGM 100:2008, 3.2.4).
    expect(parsed.data.find((row) => row.key === 'bore-depth-as-supplied')).toMatchObject({ value: '0.5643', estimate: '0.5642', at_s: '0.400' });
    expect(res.text).toContain(`"'=HYPERLINK(""http://example.invalid/steal"",""click"")"`);
  });
});

describe('the chapters track', () => {
  it('names a moment\'s readings and values; a moment without readings keeps its label', async () => {
    const res = await owner.agent.get(`/api/clips/${clipId}/chapters.vtt`).expect(200);
    const tree = new WebVTTParser(htmlEntities as Record<Entity, string>).parse(res.text, 'metadata');
    expect(tree.errors).toEqual([]);
    const text = (startS: number) => tree.cues.find((c) => Math.abs(c.startTime - startS) < 1e-9)?.tree.children.map((c) => ('value' in c ? c.value : '')).join('');
    const gaps = await Reading.findAll({ where: { momentId: moments[2] }, order: [['id', 'ASC']] });
    expect(gaps.length).toBeGreaterThan(1);
    // Kind change ends as 0.002/0.004: midpoint 0.003 in, shown at the blades' step (0.001 in).
    expect(text(1.4)).toBe('Rotor tip gap: 0.0035 in; Kind change: 0.003 in');
    expect(text(0.4)?.startsWith('Bore depth, as supplied: 0.5642 in; Bore depth, as supplied: 0.5643 in; ')).toBe(true);
    expect(text(2.4)).toBe('Nothing logged here');
  });
});

describe('moments and clips that readings rest on', () => {
  it('a moment a reading or a zero check uses cannot be deleted; an unused one can', async () => {
    const refused = await send(owner, 'delete', `/api/moments/${moments[0]}`).expect(409);
    expect(codeOf(refused)).toBe('moment_in_use');
    const zeroMoment = await addMoment(owner, spareClipId, 300, 'Micrometer closed on its anvil');
    await ZeroCheck.create({ instrumentId: inst.mic, checkedOn: '2026-11-21', unit: 'in', standardSize: '0', shown: '0', momentId: zeroMoment, createdBy: ownerId });
    expect(codeOf(await send(owner, 'delete', `/api/moments/${zeroMoment}`).expect(409))).toBe('moment_in_use');
    const unused = await addMoment(owner, clipId, 2000, 'Unused');
    await send(owner, 'delete', `/api/moments/${unused}`).expect(204);
  });

  it('a clip with a used moment cannot be deleted; one whose moments are unused goes with them, and a story cover is cleared', async () => {
    expect(codeOf(await send(owner, 'delete', `/api/clips/${clipId}`).expect(409))).toBe('clip_in_use');
    expect(codeOf(await send(owner, 'delete', `/api/clips/${spareClipId}`).expect(409))).toBe('clip_in_use');
    await ZeroCheck.destroy({ where: { checkedOn: '2026-11-21', instrumentId: inst.mic } });
    const cover = await addMoment(owner, spareClipId, 900, 'Cover still');
    const story = await Story.create({ buildId, title: 'Cover test (test)', coverMomentId: cover, createdBy: ownerId, updatedBy: ownerId });
    await send(owner, 'delete', `/api/clips/${spareClipId}`).expect(204);
    expect(await Moment.count({ where: { clipId: spareClipId } })).toBe(0);
    expect((await Story.findByPk(story.id))!.coverMomentId).toBeNull();
  });
});
