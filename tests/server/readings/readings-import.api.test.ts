import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import Papa from 'papaparse';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { errorBodySchema } from '@shared/http/error.schema';
import { readingImportResponseSchema, type ReadingImportResponse } from '@shared/readings/reading-import.schema';
import { readingListResponseSchema, readingResponseSchema, type Reading as ReadingDto } from '@shared/readings/reading.schema';
import { Instrument, ZeroCheck } from '../../../server/features/instruments/instrument.model';
import { Moment } from '../../../server/features/clips/clip.model';
import { Reading } from '../../../server/features/readings/reading.model';
import { makeTestClip } from '../../support/clips';
import { sessionFor, uploadClip, waitUntilReady, type Session } from '../../support/matrix-fixtures';
import { startTestApp, type TestApp } from '../../support/test-app';

/*
 * Importing readings from CSV: an exported file comes back unchanged, new rows are logged with the
 * same checks and figures as the readings API, and one refused row stores nothing at all.
 * Figures are invented (an invented flat-twin oil pump).
 */

let t: TestApp;
let work: string;
let owner: Session;
let other: Session;
let ownerId: number;
let buildId: number;
let clipId: number;
const CLIP = 'Pump bench session (test)';
const inst = {} as Record<'mic' | 'mmMic' | 'blades', number>;
// Names no other test file gives the shared owner account's instruments (files run at once on one database).
const INSTRUMENT = { mic: 'Import test 0–1 in outside micrometer', mmMic: 'Import test 25–50 mm micrometer', blades: 'Import test feeler blades' };

const send = (s: Session, url: string, body: object) => s.agent.post(url).set('x-csrf-token', s.token).send(body);
const importCsv = (csv: string, store: boolean, mapping?: Record<string, string | null>, s: Session = owner) =>
  send(s, `/api/builds/${buildId}/readings/import`, { csv, store, ...(mapping && { mapping }) });
const preview = (res: { body: unknown }): ReadingImportResponse => readingImportResponseSchema.parse(res.body);

async function list(): Promise<ReadingDto[]> {
  const res = await owner.agent.get(`/api/builds/${buildId}/readings?limit=1000`).expect(200);
  return readingListResponseSchema.parse(res.body).items;
}
const byKey = async () => new Map((await list()).map((r) => [r.key, r]));
const counts = async () => ({ readings: await Reading.count({ where: { buildId } }), moments: await Moment.count({ where: { clipId } }) });

/** A CSV with the export's headers, from rows of cells by column name. */
function csvOf(columns: string[], rows: Record<string, string | undefined>[]): string {
  return Papa.unparse({ fields: columns, data: rows.map((r) => columns.map((c) => r[c] ?? '')) }, { newline: '\r\n' });
}
const COLUMNS = ['key', 'name', 'kind', 'unit', 'value', 'passes', 'stops', 'values', 'instrument', 'part', 'clip', 'at_s', 'taken_on', 'temperature_c', 'material', 'note'];

beforeAll(async () => {
  work = fs.mkdtempSync(path.join(os.tmpdir(), 'benchproof-readings-import-'));
  const clipFile = await makeTestClip({ seconds: 3, format: 'mp4-h264', dir: work });
  t = await startTestApp({}, { jobs: true });
  [owner, other] = await Promise.all([sessionFor(t, 'owner'), sessionFor(t, 'otherBuilder')]);
  ownerId = (await owner.agent.get('/api/me').expect(200)).body.user.id as number;
  const build = await send(owner, '/api/builds', {
    title: 'Invented flat-twin oil pump, import (test)',
    parts: [{ name: 'Oil pump', serial: 'TP-0417' }, { name: 'Crankshaft', serial: 'TC-2291' }],
  }).expect(201);
  buildId = build.body.build.id;
  clipId = await uploadClip(owner, buildId, clipFile);
  await waitUntilReady(owner, clipId);
  await owner.agent.patch(`/api/clips/${clipId}`).set('x-csrf-token', owner.token).send({ title: CLIP }).expect(200);
  const make = (name: string, kind: string, unit: string, resolution: string) =>
    Instrument.create({ ownerId, name, kind: kind as Instrument['kind'], unit: unit as Instrument['unit'], resolution, lastCalibratedOn: '2026-01-05', calibrationIntervalDays: 3650, calibratedBy: 'Invented test lab' });
  inst.mic = (await make(INSTRUMENT.mic, 'outside-micrometer', 'in', '0.0001')).id;
  inst.mmMic = (await make(INSTRUMENT.mmMic, 'outside-micrometer', 'mm', '0.001')).id;
  inst.blades = (await make(INSTRUMENT.blades, 'feeler-blades', 'in', '0.0005')).id;
  // The micrometer read 0.0001 in closed on 2026-11-20: that day's readings lose 0.0001 in, imported or not.
  await ZeroCheck.create({ instrumentId: inst.mic, checkedOn: '2026-11-20', unit: 'in', standardSize: '0', shown: '0.0001', momentId: null, createdBy: ownerId });

  const moment = (await send(owner, `/api/clips/${clipId}/moments`, { atMs: 400, label: 'Bore depth' }).expect(201)).body.moment.id as number;
  const log = (body: object) => send(owner, `/api/builds/${buildId}/readings`, { momentId: moment, takenOn: '2026-11-20', ...body }).expect(201);
  await log({ instrumentId: inst.mic, name: 'Bore depth, as supplied', kind: 'direct', value: '0.5643"', note: '=looks like a formula, but is a note' });
  await log({ instrumentId: inst.blades, name: 'Outer rotor to body', kind: 'bracket', passes: '0.004', stops: '0.0045' });
  await log({ instrumentId: inst.mmMic, partId: build.body.build.parts[1].id, name: 'Journal, repeated', kind: 'repeated', values: ['44.981', '44.982', '44.980'], temperatureC: 23, material: 'steel' });
  await log({ instrumentId: inst.mic, name: 'Rotor height', kind: 'direct', value: '559.5 thou' });
}, 240_000);

afterAll(async () => {
  await t?.close();
  if (work) fs.rmSync(work, { recursive: true, force: true });
});

describe('importing the build’s own export', () => {
  it('finds every row unchanged and stores nothing new', async () => {
    const csv = (await owner.agent.get(`/api/builds/${buildId}/readings.csv`).expect(200)).text;
    const before = await counts();
    const res = await importCsv(csv, true).expect(200);
    const body = preview(res);
    expect(body.counts).toEqual({ new: 0, unchanged: 4, refused: 0 });
    expect(body.stored).toBe(true);
    expect(body.rows.map((r) => r.status)).toEqual(['unchanged', 'unchanged', 'unchanged', 'unchanged']);
    expect(body.rows.map((r) => r.line)).toEqual([2, 3, 4, 5]);
    expect(body.mapping).toMatchObject({ key: 'key', value: 'value', at_s: 'at_s', taken_on: 'taken_on' });
    expect(await counts()).toEqual(before);
  });
});

describe('importing new rows', () => {
  it('previews, then stores every kind of reading in one go with the figures the readings API gives', async () => {
    const rows = [
      { key: 'imp-depth', name: 'Bore depth, after lapping', kind: 'direct', value: '0.5651', instrument: INSTRUMENT.mic, part: 'oil pump', clip: CLIP, at_s: '0.400', taken_on: '2026-11-20' },
      { key: 'imp-gap', name: 'Inner rotor tip gap', kind: 'bracket', passes: '0.0015', stops: '0.002', instrument: INSTRUMENT.blades, clip: CLIP, at_s: '1.250', taken_on: '2026-11-20' },
      { key: 'imp-journal', name: 'Journal again', kind: 'repeated', values: '44.979 44.981 44.980', instrument: INSTRUMENT.mmMic, clip: CLIP, at_s: '1.250', taken_on: '2026-11-21', temperature_c: '22.5', material: 'steel' },
      { key: 'imp-mm', name: 'Bore in millimetres', kind: 'direct', value: '14.331 mm', instrument: INSTRUMENT.mmMic, clip: CLIP, at_s: '1.9', taken_on: '2026-11-21' },
      { key: 'imp-thou', name: 'Rotor height in thou', kind: 'direct', value: '559.7 thou', instrument: INSTRUMENT.mic, clip: CLIP, at_s: '1.9', taken_on: '2026-11-20' },
      { name: 'Rotor height', kind: 'direct', value: '0.5598', instrument: INSTRUMENT.mic, clip: CLIP, at_s: '2.1', taken_on: '2026-11-20', note: 'key made from the name' },
    ];
    const csv = csvOf(COLUMNS, rows);
    const before = await counts();

    const previewed = preview(await importCsv(csv, false).expect(200));
    expect(previewed.counts).toEqual({ new: 6, unchanged: 0, refused: 0 });
    expect(previewed.stored).toBe(false);
    expect(previewed.rows.find((r) => r.key === 'imp-mm')?.preview).toEqual({ kind: 'direct', unit: 'mm', value: '14.331', passes: null, stops: null, values: null });
    expect(previewed.rows.find((r) => r.key === 'imp-thou')?.preview).toMatchObject({ unit: 'thou', value: '559.7' });
    // "rotor-height" is taken by the reading logged before, so the name's key gets -2, as the API would give it.
    expect(previewed.rows[5]?.key).toBe('rotor-height-2');
    // 0.400 s is a moment already marked; 1.250 s and 1.9 s are new ones, each marked once.
    expect(previewed.rows.map((r) => r.moment?.isNew)).toEqual([false, true, true, true, true, true]);
    expect(await counts()).toEqual(before);

    const stored = preview(await importCsv(csv, true).expect(200));
    expect(stored.stored).toBe(true);
    expect(stored.counts).toEqual({ new: 6, unchanged: 0, refused: 0 });
    expect(await counts()).toEqual({ readings: before.readings + 6, moments: before.moments + 3 });

    // The same readings logged one by one through the API (in a second build) work out the same.
    const readings = await byKey();
    const twinBuild = (await send(owner, '/api/builds', { title: 'Twin of the import (test)', parts: [{ name: 'Oil pump' }] }).expect(201)).body.build;
    const moments = await Moment.findAll({ where: { clipId } });
    const twinClip = await uploadClip(owner, twinBuild.id, path.join(work, fs.readdirSync(work).find((f) => f.endsWith('.mp4'))!));
    await waitUntilReady(owner, twinClip);
    const twinMoment = (await send(owner, `/api/clips/${twinClip}/moments`, { atMs: 400, label: 'Twin' }).expect(201)).body.moment.id as number;
    const twin = async (body: object) =>
      readingResponseSchema.parse((await send(owner, `/api/builds/${twinBuild.id}/readings`, { momentId: twinMoment, ...body }).expect(201)).body).reading;
    const expected = {
      'imp-depth': await twin({ instrumentId: inst.mic, partId: twinBuild.parts[0].id, name: 'x', kind: 'direct', value: '0.5651', takenOn: '2026-11-20' }),
      'imp-gap': await twin({ instrumentId: inst.blades, name: 'x', kind: 'bracket', passes: '0.0015', stops: '0.002', takenOn: '2026-11-20' }),
      'imp-journal': await twin({ instrumentId: inst.mmMic, name: 'x', kind: 'repeated', values: ['44.979', '44.981', '44.980'], takenOn: '2026-11-21', temperatureC: 22.5, material: 'steel' }),
      'imp-mm': await twin({ instrumentId: inst.mmMic, name: 'x', kind: 'direct', value: '14.331 mm', takenOn: '2026-11-21' }),
      'imp-thou': await twin({ instrumentId: inst.mic, name: 'x', kind: 'direct', value: '559.7 thou', takenOn: '2026-11-20' }),
    };
    for (const [key, api] of Object.entries(expected)) {
      const imported = readings.get(key)!;
      expect({ key, ...figuresOf(imported) }).toEqual({ key, ...figuresOf(api) });
    }
    // The zero check of that day was applied to the imported micrometer readings too (0.5651 − 0.0001 in).
    expect(readings.get('imp-depth')!.result.display).toBe('0.5650 in');
    expect(readings.get('imp-depth')!.partName).toBe('Oil pump');
    expect(readings.get('rotor-height-2')).toMatchObject({ name: 'Rotor height', value: '0.5598', note: 'key made from the name' });
    const at = (key: string) => moments.find((m) => m.id === readings.get(key)!.momentId)?.atMs;
    expect([at('imp-depth'), at('imp-gap'), at('imp-journal'), at('imp-mm')]).toEqual([400, 1250, 1250, 1900]);

    // Importing the same file again finds all six unchanged.
    const again = preview(await importCsv(csv, false).expect(200));
    expect(again.rows.filter((r) => r.key?.startsWith('imp-')).every((r) => r.status === 'unchanged')).toBe(true);
  });
});

function figuresOf(r: ReadingDto) {
  return { kind: r.kind, unit: r.unit, value: r.value, passes: r.passes, stops: r.stops, values: r.values, engine: r.engine, display: r.result.display, u: r.result.standardUncertainty, temperatureC: r.temperatureC, material: r.material };
}

describe('one refused row stores nothing', () => {
  const good = (i: number) => ({ key: `batch-${i}`, name: `Batch reading ${i}`, kind: 'direct', value: `0.56${10 + i}`, instrument: INSTRUMENT.mic, clip: CLIP, at_s: `2.${200 + i}`, taken_on: '2026-11-20' });
  const cases: [string, Record<string, string>, string, RegExp][] = [
    ['an instrument the builder does not have', { instrument: 'Borrowed micrometer' }, 'instrument', /^line 8: no instrument named "Borrowed micrometer"; your instruments are "[^"]*micrometer"/],
    ['a figure that is not a number', { value: '0.56O4' }, 'value', /line 8: "O4" is not a unit Benchproof reads/],
    ['a key the build has with other figures', { key: 'imp-depth', value: '0.5699' }, 'key', /already has a reading "Bore depth, after lapping" with the key "imp-depth" and other figures \(0\.5651 in\)/],
  ];
  for (const [what, change, field, message] of cases) {
    it(`${what}: 422 naming the line and the field, no reading and no moment stored`, async () => {
      const rows = Array.from({ length: 10 }, (_, i) => good(i));
      rows[6] = { ...rows[6]!, ...change };
      const before = await counts();
      const res = await importCsv(csvOf(COLUMNS, rows), true).expect(422);
      const body = preview(res);
      expect(body.stored).toBe(false);
      expect(body.counts).toEqual({ new: 9, unchanged: 0, refused: 1 });
      const refused = body.rows.filter((r) => r.status === 'refused');
      expect(refused.map((r) => r.line)).toEqual([8]);
      expect(refused[0]!.problems[0]).toMatchObject({ field });
      expect(refused[0]!.problems[0]!.message).toMatch(/^line 8: /);
      expect(refused[0]!.problems.map((p) => p.message).join(' ')).toMatch(message);
      expect(await counts()).toEqual(before);
    });
  }

  it('two imports of the same new rows at once: one stores them, the other stores nothing (no reading or moment twice)', async () => {
    const rows = Array.from({ length: 5 }, (_, i) => ({ ...good(40 + i), at_s: `2.${500 + i}` }));
    const csv = csvOf(COLUMNS, rows);
    const before = await counts();
    const answers = await Promise.all([importCsv(csv, true), importCsv(csv, true)]);
    // The later one either saw the first one's rows (all unchanged) or met its keys inside its transaction (409).
    expect(answers.map((a) => a.status).sort()).toSatisfy((s: number[]) => s[0] === 200 && (s[1] === 200 || s[1] === 409));
    expect(answers.filter((a) => a.status === 200 && (a.body as ReadingImportResponse).counts.new === 5)).toHaveLength(1);
    expect(await counts()).toEqual({ readings: before.readings + 5, moments: before.moments + 5 });
  });

  it('two rows with the same key: the second is refused, naming the first', async () => {
    const rows = [good(20), { ...good(21), key: 'batch-20' }];
    const body = preview(await importCsv(csvOf(COLUMNS, rows), true).expect(422));
    expect(body.rows[1]!.problems[0]!.message).toMatch(/line 3: the key "batch-20" is also on line 2/);
  });
});

describe('a spreadsheet of its own shape', () => {
  const sheet = [
    'What,Reading,Gauge,Time,Date',
    `Gear pocket depth,0.8121,${INSTRUMENT.mic},0:02.6,2026-11-20`,
    `Gear pocket width,0.6254,${INSTRUMENT.mic},2.65,2026-11-20`,
  ].join('\n');

  it('maps "Reading", "Gauge", "Time" and "Date" by their usual names, and asks for the name when no column gives it', async () => {
    const body = preview(await importCsv(sheet, false).expect(200));
    expect(body.columns).toEqual(['What', 'Reading', 'Gauge', 'Time', 'Date']);
    expect(body.mapping).toMatchObject({ value: 'Reading', instrument: 'Gauge', at_s: 'Time', taken_on: 'Date', name: null, clip: null });
    expect(body.counts.refused).toBe(2);
    expect(body.rows[0]!.problems.map((p) => p.field)).toEqual(['name']);
  });

  it('stores the rows once the name is mapped by hand, in the build’s only clip', async () => {
    const before = await counts();
    const body = preview(await importCsv(sheet, true, { name: 'What' }).expect(200));
    expect(body.mapping.name).toBe('What');
    expect(body.counts).toEqual({ new: 2, unchanged: 0, refused: 0 });
    const readings = await byKey();
    expect(readings.get('gear-pocket-depth')).toMatchObject({ value: '0.8121', unit: 'in', atMs: 2600, clipTitle: CLIP, takenOn: '2026-11-20' });
    expect(readings.get('gear-pocket-width')).toMatchObject({ value: '0.6254', atMs: 2650 });
    expect(await counts()).toEqual({ readings: before.readings + 2, moments: before.moments + 2 });
  });

  it('refuses a mapping to a column the file does not have', async () => {
    const res = await importCsv(sheet, false, { name: 'Description' }).expect(400);
    expect(errorBodySchema.parse(res.body).error.message).toMatch(/no column "Description"/);
  });
});

describe('what a spreadsheet may do to a file', () => {
  it('reads past a byte-order mark, undoes the export’s formula escaping, and refuses a formula where a figure belongs', async () => {
    const csv = `\uFEFF${csvOf(COLUMNS, [
      { key: 'bom-note', name: "'-rotor end float, by hand", value: '0.0031', instrument: INSTRUMENT.mic, clip: CLIP, at_s: '2.9', taken_on: '2026-11-20', note: "'=SUM(A1:A3) was the sheet's total" },
    ])}`;
    const body = preview(await importCsv(csv, true).expect(200));
    expect(body.columns[0]).toBe('key');
    expect(body.counts.new).toBe(1);
    const stored = (await byKey()).get('bom-note')!;
    expect(stored.name).toBe('-rotor end float, by hand');
    expect(stored.note).toBe("=SUM(A1:A3) was the sheet's total");
    // The export escapes it again, and that file imports back unchanged.
    const exported = (await owner.agent.get(`/api/builds/${buildId}/readings.csv`).expect(200)).text;
    expect(exported).toContain("'=SUM(A1:A3)");
    expect(preview(await importCsv(exported, false).expect(200)).counts).toMatchObject({ new: 0, refused: 0 });

    const formula = csvOf(COLUMNS, [{ key: 'formula', name: 'Sum', value: '=B2+B3', instrument: INSTRUMENT.mic, clip: CLIP, at_s: '2.9', taken_on: '2026-11-20' }]);
    const refused = preview(await importCsv(formula, true).expect(422));
    expect(refused.rows[0]!.problems[0]).toEqual({ field: 'value', message: expect.stringMatching(/^line 2: "=B2\+B3" is a spreadsheet formula, not a figure/) });
  });

  it('names the line a row starts on, past notes of several lines, blank lines and semicolons as separators', async () => {
    const csv = [
      'name;value;instrument;at_s;taken_on;note',
      `Line two;0.5601;${INSTRUMENT.mic};2.95;2026-11-20;"first line of the note`,
      'second line, with ""quotes"""',
      '',
      `Line five;0.56x;${INSTRUMENT.mic};2.95;2026-11-20;`,
    ].join('\r\n');
    const body = preview(await importCsv(csv, false).expect(200));
    expect(body.rows.map((r) => [r.line, r.status])).toEqual([
      [2, 'new'],
      [5, 'refused'],
    ]);
    expect(body.rows[1]!.problems[0]!.message).toMatch(/^line 5: /);
  });

  it('refuses a file over 5 MB, storing nothing', async () => {
    const before = await counts();
    const big = `name,value\r\n${'x,1\r\n'.repeat(Math.ceil((5 * 1024 * 1024) / 5) + 1)}`;
    const res = await importCsv(big, true).expect(400);
    expect(errorBodySchema.parse(res.body).error.details[0]).toMatchObject({ path: 'csv', message: expect.stringMatching(/larger than 5 MB/) });
    expect(await counts()).toEqual(before);
  });

  it('refuses a body over the route’s own 8 MB parser limit with 413, while the app’s 256 kB limit does not apply here', async () => {
    const res = await importCsv('x'.repeat(9 * 1024 * 1024), false).expect(413);
    expect(errorBodySchema.parse(res.body).error.code).toBe('too_large');
    // Other routes keep the small limit.
    const other = await send(owner, `/api/builds/${buildId}/readings`, { name: 'x'.repeat(300 * 1024) }).expect(413);
    expect(errorBodySchema.parse(other.body).error.code).toBe('too_large');
  });

  it('is the builder’s own: another builder is told there is no such build', async () => {
    await importCsv('name\r\nx\r\n', false, undefined, other).expect(404);
  });
});
