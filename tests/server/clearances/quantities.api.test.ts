import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { clearanceResponseSchema } from '@shared/clearances/clearance.schema';
import { errorBodySchema } from '@shared/http/error.schema';
import { instrumentResponseSchema, zeroCheckResponseSchema } from '@shared/instruments/instrument.schema';
import { readingResponseSchema } from '@shared/readings/reading.schema';
import { specResponseSchema } from '@shared/specs/spec-library.schema';
import { makeTestClip } from '../../support/clips';
import { sessionFor, type Session } from '../../support/matrix-fixtures';
import { makeReviewFixture, type ReviewFixture } from '../../support/review-fixtures';
import { startTestApp, type TestApp } from '../../support/test-app';

/* Instruments, readings, specs and results of quantities other than length, through the API. */

let t: TestApp;
let work: string;
let owner: Session;
let f: ReviewFixture;

const post = (url: string, body: object) => owner.agent.post(url).set('x-csrf-token', owner.token).send(body);
const patch = (url: string, body: object) => owner.agent.patch(url).set('x-csrf-token', owner.token).send(body);
const errorOf = (res: { body: unknown }) => errorBodySchema.parse(res.body).error;

async function instrument(body: object) {
  return instrumentResponseSchema.parse((await post('/api/instruments', body).expect(201)).body).instrument;
}
async function reading(body: object) {
  return readingResponseSchema.parse((await post(`/api/builds/${f.buildId}/readings`, { momentId: f.momentIds[0], ...body }).expect(201)).body).reading;
}

beforeAll(async () => {
  work = fs.mkdtempSync(path.join(os.tmpdir(), 'benchproof-quantities-'));
  const clipFile = await makeTestClip({ seconds: 2, format: 'mp4-h264', dir: work });
  t = await startTestApp({}, { jobs: true });
  owner = await sessionFor(t, 'owner');
  f = await makeReviewFixture(owner, { clipFile, title: 'Invented head, quantities (test)' });
}, 180_000);

afterAll(async () => {
  await t?.close();
  fs.rmSync(work, { recursive: true, force: true });
});

describe('records of every quantity', () => {
  it('keeps a torque wrench in lbf·ft and logs a torque reading as typed, with u from its resolution', async () => {
    const wrench = await instrument({ name: 'Invented click wrench (test)', kind: 'torque-wrench', unit: 'lbf_ft', resolution: '1', maxPermissibleError: '1.4' });
    expect(wrench.unit).toBe('lbf_ft');
    const r = await reading({ instrumentId: wrench.id, name: 'Head bolt 1 torque', kind: 'direct', value: '35 lb-ft' });
    expect(r.unit).toBe('lbf_ft');
    expect(r.value).toBe('35');
    expect(r.entered).toEqual({ value: '35 lb-ft' });
    expect(r.result.quantity).toBe('torque');
    expect(r.result.valueUm).toBeNull();
    expect(r.result.value).toBe(35);
    // Resolution 1 lbf·ft: 0.5/√3; maximum permissible error 1.4 lbf·ft: 1.4/√3 (GUM 4.3.7), in quadrature (GUM eq. 10).
    expect(r.result.standardUncertainty).toBeCloseTo(Math.sqrt(0.5 ** 2 + 1.4 ** 2) / Math.sqrt(3), 10);
    expect(r.result.display).toBe('35 lbf·ft');
  });

  it('refuses a kind with a unit of another quantity, and a length typed into a torque reading', async () => {
    const refused = await post('/api/instruments', { name: 'Wrong (test)', kind: 'torque-wrench', unit: 'in', resolution: '1' }).expect(400);
    expect(errorOf(refused).details).toEqual([expect.objectContaining({ path: 'unit', message: expect.stringMatching(/reads torque: choose a unit of torque/) })]);
    const wrench = await instrument({ name: 'Another invented wrench (test)', kind: 'torque-wrench', unit: 'N_m', resolution: '0.5' });
    const res = await post(`/api/builds/${f.buildId}/readings`, { momentId: f.momentIds[0], instrumentId: wrench.id, name: 'Stray', kind: 'direct', value: '0.5642 in' }).expect(400);
    expect(errorOf(res).details).toEqual([{ path: 'value', message: expect.stringMatching(/inches is not a torque/) }]);
    const hot = await post(`/api/builds/${f.buildId}/readings`, { momentId: f.momentIds[0], instrumentId: wrench.id, name: 'Hot', kind: 'direct', value: '47', temperatureC: 30, material: 'steel' }).expect(400);
    expect(errorOf(hot).details[0]!.message).toMatch(/only a length is corrected to 20 °C/);
  });

  it('applies a pressure gauge’s zero check of any unit', async () => {
    const gauge = await instrument({ name: 'Invented oil pressure gauge (test)', kind: 'pressure-gauge', unit: 'psi', resolution: '0.5' });
    const day = new Date().toISOString().slice(0, 10);
    const check = zeroCheckResponseSchema.parse(
      (await post(`/api/instruments/${gauge.id}/zero-checks`, { checkedOn: day, standardSize: '0', shown: '0.5' }).expect(201)).body,
    ).zeroCheck;
    expect(check.offset).toBe('0.5');
    const r = await reading({ instrumentId: gauge.id, name: 'Oil pressure, hot idle', kind: 'direct', value: '22.5 psi', takenOn: day });
    // Shown 22.5 psi less the day's zero offset 0.5 psi.
    expect(r.result.value).toBe(22);
    expect(r.zeroCheck).toMatchObject({ offset: '0.5', unit: 'psi' });
  });

  it('makes a compression-ratio result from cc’d volumes and lengths, judged against a ratio spec', async () => {
    const burette = await instrument({ name: 'Invented burette (test)', kind: 'burette', unit: 'cc', resolution: '0.1' });
    const caliper = await instrument({ name: 'Invented bore gauge (test)', kind: 'caliper', unit: 'in', resolution: '0.001' });
    const lengths = { bore: '4.000', stroke: '3.480', 'gasket-bore': '4.100', 'gasket-thickness': '0.040', 'deck-height': '0.010' };
    const ids: Record<string, number> = {};
    for (const [slot, value] of Object.entries(lengths)) ids[slot] = (await reading({ instrumentId: caliper.id, name: `CR ${slot}`, kind: 'direct', value })).id;
    ids.chamber = (await reading({ instrumentId: burette.id, name: 'CR chamber', kind: 'direct', value: '64.2' })).id;
    ids.dish = (await reading({ instrumentId: burette.id, name: 'CR dish', kind: 'direct', value: '5.0' })).id;
    const spec = specResponseSchema.parse(
      (await post('/api/specs', { name: 'Invented compression ratio band (test)', unit: '1', min: '9.5', max: '10.5:1', source: { kind: 'common-practice', text: 'Invented for a test' } }).expect(201)).body,
    ).spec;
    expect(spec.latest).toMatchObject({ unit: '1', min: '9.5', max: '10.5' });

    const formula =
      '(pi/4*bore^2*stroke + chamber + pi/4*gasket-bore^2*gasket-thickness + pi/4*bore^2*deck-height + dish) / (chamber + pi/4*gasket-bore^2*gasket-thickness + pi/4*bore^2*deck-height + dish)';
    const made = clearanceResponseSchema.parse(
      (
        await post(`/api/builds/${f.buildId}/clearances`, {
          name: 'Static compression ratio',
          template: 'compression-ratio',
          formula,
          terms: Object.entries(ids).map(([symbol, readingId]) => ({ readingId, symbol })),
          specVersionId: spec.latest.id,
        }).expect(201)
      ).body,
    ).clearance;
    expect(made.formula).toBe(formula);
    expect(made.terms.map((t) => t.symbol).sort()).toEqual(Object.keys(ids).sort());
    expect(made.problems).toEqual([]);
    expect(made.result).toMatchObject({ quantity: 'ratio', unit: '1', valueUm: null, verdict: 'conforms' });
    // Independent arithmetic as in tests/shared/clearances/formula-results.test.ts (1 in³ = 16.387064 cc, NIST SP 811 B.8).
    const cyl = (d: number, h: number) => (Math.PI / 4) * d * d * h * 16.387064;
    const tdc = 64.2 + cyl(4.1, 0.04) + cyl(4, 0.01) + 5.0;
    expect(made.result!.value!).toBeCloseTo((cyl(4, 3.48) + tdc) / tdc, 9);

    // A reading's key may change: the formula keeps the name it gave the reading.
    await patch(`/api/readings/${ids.chamber}`, { key: 'chamber-cyl-1', lockVersion: 1 }).expect(200);
    const again = clearanceResponseSchema.parse((await owner.agent.get(`/api/clearances/${made.id}`).expect(200)).body).clearance;
    expect(again.result!.value).toBe(made.result!.value);
    expect(again.terms.find((t) => t.symbol === 'chamber')!.readingKey).toBe('chamber-cyl-1');

    // The same readings summed are refused by the engine in words (a length plus a volume).
    const sum = clearanceResponseSchema.parse(
      (await post(`/api/builds/${f.buildId}/clearances`, { name: 'Nonsense sum', terms: [{ readingId: ids.bore, sign: 1 }, { readingId: ids.chamber, sign: 1 }] }).expect(201)).body,
    ).clearance;
    expect(sum.result).toBeNull();
    expect(sum.problems.join(' ')).toMatch(/length|volume/i);
  });

  it('refuses a formula whose dimensions do not fit, or that names no reading, at save, on the formula field', async () => {
    const bad = await post(`/api/builds/${f.buildId}/clearances`, {
      name: 'Bad formula',
      formula: 'depth + height * height',
      terms: [
        { readingId: f.readings.depth.id, symbol: 'depth' },
        { readingId: f.readings.height.id, symbol: 'height' },
      ],
    }).expect(400);
    expect(errorOf(bad).details[0]).toMatchObject({ path: 'formula' });
    const unnamed = await post(`/api/builds/${f.buildId}/clearances`, { name: 'Unnamed', formula: 'depth / 2', terms: [{ readingId: f.readings.depth.id }] }).expect(400);
    expect(errorOf(unnamed).details).toEqual([expect.objectContaining({ path: 'terms.0.symbol' })]);
    const wrongUnit = await post(`/api/builds/${f.buildId}/clearances`, {
      name: 'Radial',
      formula: 'diametral / 2',
      resultUnit: 'cc',
      terms: [{ readingId: f.readings.depth.id, symbol: 'diametral' }],
    }).expect(400);
    expect(errorOf(wrongUnit).details).toEqual([expect.objectContaining({ path: 'resultUnit' })]);
  });

  it('states a radial clearance in the unit chosen and turns a formula back into a sum on request', async () => {
    const made = clearanceResponseSchema.parse(
      (
        await post(`/api/builds/${f.buildId}/clearances`, {
          name: 'Half the depth',
          template: 'radial-clearance',
          formula: 'diametral / 2',
          resultUnit: 'thou',
          terms: [{ readingId: f.readings.depth.id, symbol: 'diametral' }],
        }).expect(201)
      ).body,
    ).clearance;
    // The fixture's bore depth: 0.5642 in, so half is 0.2821 in = 282.1 thou (1 thou = 0.001 in).
    expect(made.result).toMatchObject({ quantity: 'length', unit: 'thou' });
    expect(made.result!.value).toBeCloseTo(282.1, 9);
    const sum = clearanceResponseSchema.parse(
      (await patch(`/api/clearances/${made.id}`, { formula: null, resultUnit: null, terms: [{ readingId: f.readings.depth.id, sign: 1 }], lockVersion: made.lockVersion }).expect(200)).body,
    ).clearance;
    expect(sum.formula).toBeNull();
    expect(sum.terms[0]!.symbol).toBeNull();
    expect(sum.result!.unit).toBe('in');
    expect(sum.result!.value).toBeCloseTo(0.5642, 12);
  });
});
