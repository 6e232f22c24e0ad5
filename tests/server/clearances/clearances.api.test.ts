import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import type { InferCreationAttributes } from 'sequelize';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { clearanceListResponseSchema, clearanceResponseSchema, type Clearance as ClearanceDto } from '@shared/clearances/clearance.schema';
import { errorBodySchema } from '@shared/http/error.schema';
import { Clearance, ClearanceTerm } from '../../../server/features/clearances/clearance.model';
import { Instrument } from '../../../server/features/instruments/instrument.model';
import { Spec, SpecVersion } from '../../../server/features/specs/spec.model';
import { Story } from '../../../server/features/stories/story.model';
import { makeTestClip } from '../../support/clips';
import { sessionFor, uploadClip, waitUntilReady, type Session } from '../../support/matrix-fixtures';
import { startTestApp, type TestApp } from '../../support/test-app';

const SQRT3 = Math.sqrt(3);

let t: TestApp;
let work: string;
let owner: Session;
let other: Session;
let moderator: Session;
let follower: Session;
let admin: Session;
let ownerId: number;
let otherId: number;
let buildId: number;
let otherBuildReadingId: number;
const r = {} as Record<'bore' | 'rotor' | 'gap' | 'before' | 'after', number>;
const specs = {} as Record<'endFloat' | 'tight' | 'othersPrivate' | 'broken', number>;
let endFloatSpecId: number;
let momentId: number;

const send = (s: Session, verb: 'post' | 'patch' | 'delete', url: string, body?: object) => {
  const req = s.agent[verb](url).set('x-csrf-token', s.token);
  return body === undefined ? req : req.send(body);
};
const error = (res: { body: unknown }) => errorBodySchema.parse(res.body).error;

async function me(s: Session): Promise<number> {
  return (await s.agent.get('/api/me').expect(200)).body.user.id as number;
}

async function specVersion(ownerOf: number, figures: Partial<InferCreationAttributes<SpecVersion>>, shared = false, specId?: number) {
  const id = specId ?? (await Spec.create({ ownerId: ownerOf, name: 'Invented pump end float (test)', appliesTo: 'Invented flat-twin oil pump', shared })).id;
  const version = (await SpecVersion.count({ where: { specId: id } })) + 1;
  const v = await SpecVersion.create({
    specId: id,
    version,
    unit: 'in',
    minValue: null,
    maxValue: null,
    preferredMin: null,
    preferredMax: null,
    rejectLimit: null,
    rule: 'guarded',
    sourceKind: 'manual',
    sourceText: 'Invented workshop manual, section 3 (test figures)',
    createdBy: ownerOf,
    ...figures,
  });
  return { specId: id, versionId: v.id };
}

function createClearance(body: Record<string, unknown>, s: Session = owner, build = buildId) {
  return send(s, 'post', `/api/builds/${build}/clearances`, body);
}

async function created(body: Record<string, unknown>): Promise<ClearanceDto> {
  const res = await createClearance(body);
  if (res.status !== 201) throw new Error(`clearance refused: ${res.status} ${JSON.stringify(res.body)}`);
  return clearanceResponseSchema.parse(res.body).clearance;
}

const endFloatTerms = () => [
  { readingId: r.bore, sign: 1 },
  { readingId: r.rotor, sign: -1 },
];

beforeAll(async () => {
  work = fs.mkdtempSync(path.join(os.tmpdir(), 'benchproof-clearances-api-'));
  const clipFile = await makeTestClip({ seconds: 2, format: 'mp4-h264', dir: work });
  t = await startTestApp({}, { jobs: true });
  [owner, other, moderator, follower, admin] = await Promise.all([
    sessionFor(t, 'owner'),
    sessionFor(t, 'otherBuilder'),
    sessionFor(t, 'moderator'),
    sessionFor(t, 'follower'),
    sessionFor(t, 'admin'),
  ]);
  [ownerId, otherId] = await Promise.all([me(owner), me(other)]);
  buildId = (await send(owner, 'post', '/api/builds', { title: 'Invented pump, end float (test)' }).expect(201)).body.build.id;
  const otherBuild = (await send(owner, 'post', '/api/builds', { title: 'Invented second build (test)' }).expect(201)).body.build.id;
  const [clip, otherClip] = await Promise.all([uploadClip(owner, buildId, clipFile), uploadClip(owner, otherBuild, clipFile)]);
  await Promise.all([waitUntilReady(owner, clip), waitUntilReady(owner, otherClip)]);
  const moment = (await send(owner, 'post', `/api/clips/${clip}/moments`, { atMs: 500, label: 'Pump body on the plate' }).expect(201)).body.moment.id;
  momentId = moment;
  const otherMoment = (await send(owner, 'post', `/api/clips/${otherClip}/moments`, { atMs: 500, label: 'Elsewhere' }).expect(201)).body.moment.id;

  const calibrated = { ownerId, lastCalibratedOn: '2026-01-05', calibrationIntervalDays: 3650 };
  const depth = await Instrument.create({ ...calibrated, name: 'Test depth micrometer', kind: 'depth-micrometer', unit: 'in', resolution: '0.0001' });
  const mic = await Instrument.create({ ...calibrated, name: 'Test outside micrometer', kind: 'outside-micrometer', unit: 'in', resolution: '0.0001' });
  const blades = await Instrument.create({ ...calibrated, name: 'Test feeler blades', kind: 'feeler-blades', unit: 'in', resolution: '0.001' });
  const reading = async (build: number, body: Record<string, unknown>) => {
    const res = await send(owner, 'post', `/api/builds/${build}/readings`, { momentId: moment, takenOn: '2026-11-20', ...body });
    if (res.status !== 201) throw new Error(`fixture reading refused: ${JSON.stringify(res.body)}`);
    return res.body.reading.id as number;
  };
  // The worked end-float figures of tests/shared/measure/calc.test.ts.
  r.bore = await reading(buildId, { instrumentId: depth.id, name: 'Bore depth', kind: 'direct', value: '0.5642' });
  r.rotor = await reading(buildId, { instrumentId: mic.id, name: 'Rotor height', kind: 'direct', value: '0.5595' });
  r.gap = await reading(buildId, { instrumentId: blades.id, name: 'Rotor tip gap', kind: 'bracket', passes: '0.003', stops: '0.004' });
  r.before = await reading(buildId, { instrumentId: mic.id, name: 'Body face before', kind: 'direct', value: '0.5650' });
  r.after = await reading(buildId, { instrumentId: mic.id, name: 'Body face after', kind: 'direct', value: '0.5630' });
  otherBuildReadingId = await reading(otherBuild, { momentId: otherMoment, instrumentId: mic.id, name: 'Elsewhere', kind: 'direct', value: '0.5' });

  const endFloat = await specVersion(ownerId, { minValue: '0.003', maxValue: '0.005', preferredMin: '0.004', preferredMax: '0.00475' });
  specs.endFloat = endFloat.versionId;
  endFloatSpecId = endFloat.specId;
  specs.tight = (await specVersion(ownerId, { minValue: '0.003', maxValue: '0.00475' })).versionId;
  specs.othersPrivate = (await specVersion(otherId, { maxValue: '0.006' })).versionId;
  // Stored figures that do not hold together (min above max): the clearance must say so, not fail.
  specs.broken = (await specVersion(ownerId, { minValue: '0.005', maxValue: '0.003' })).versionId;
}, 240_000);

afterAll(async () => {
  await t?.close();
  if (work) fs.rmSync(work, { recursive: true, force: true });
});

describe('making a clearance', () => {
  it('end float = bore depth − rotor height, within spec by the guarded rule, with the working', async () => {
    const c = await created({ name: 'End float', template: 'end-float', terms: endFloatTerms(), specVersionId: specs.endFloat });
    expect(c).toMatchObject({
      key: 'end-float',
      template: 'end-float',
      // No k chosen: a 95 % interval worked out by the engine.
      coverageFactor: null,
      terms: [
        { readingId: r.bore, readingKey: 'bore-depth', readingName: 'Bore depth', sign: 1 },
        { readingId: r.rotor, readingKey: 'rotor-height', readingName: 'Rotor height', sign: -1 },
      ],
      spec: { specId: endFloatSpecId, version: 1, sourceKind: 'manual', newerVersion: null },
      problems: [],
      reviewState: 'unchecked',
    });
    const result = c.result!;
    // 0.5642 in − 0.5595 in = 0.0047 in = 119.38 µm exactly (NIST SP 811, B.8).
    expect(result.valueUm).toBe(119.38);
    // u = 2.54/(2√3) µm per reading (JCGM 100:2008, F.2.2.1); u_c = √2 u (eq. (10)).
    const uEach = 2.54 / (2 * SQRT3);
    expect(result.standardUncertaintyUm).toBeCloseTo(Math.SQRT2 * uEach, 12);
    // Two equal rectangulars make a triangular distribution of half-width 2.54 µm: its 95 % interval
    // is ±2.54(1 − √0.05) µm = ±1.972 µm (JCGM 101:2008 6.4.2 with equal widths), found by Monte Carlo.
    expect(result.expandedUncertaintyUm).toBeCloseTo(2.54 * (1 - Math.sqrt(0.05)), 1);
    expect(result.method).toBe('monte-carlo');
    expect(result.budget).toHaveLength(2);
    // ISO 14253-1 guarded acceptance: the whole interval 0.0047 ± 0.0000776 in lies inside 0.003–0.005 in.
    expect(result.verdict).toBe('conforms');
    // Preferred 0.004–0.00475 in: 0.00475 − U < 0.0047 < 0.00475 + U, so too close to call (ISO 14253-1).
    expect(result.preferredVerdict).toBe('undecided');
    expect(result.rule).toBe('guarded');
    // 0.003 in = 76.2 µm, 0.005 in = 127 µm, 0.004 in = 101.6 µm, 0.00475 in = 120.65 µm (× 25.4).
    expect(result.band).toEqual({ minUm: 76.2, maxUm: 127, preferredMinUm: 101.6, preferredMaxUm: 120.65, rejectUm: null });
    // U two significant digits, value to the same place (JCGM 100:2008, 7.2.6).
    // U ≈ 0.0000776 in sits at a rounding edge, so the Monte Carlo tolerance allows either last digit.
    expect(result.display).toMatch(/^0\.004700 in ± 0\.00007[78] in \(95 %, k = 1\.90\)$/);
    expect(result.steps.join('\n')).toMatch(/Clearance = bore-depth − rotor-height = 0\.5642 in − 0\.5595 in = 0\.0047 in/);
  });

  it('is too close to call within U of a limit (ISO 14253-1 guarded rule)', async () => {
    // 0.0047 in against max 0.00475 in: 0.00475 − U < 0.0047 < 0.00475 + U.
    const c = await created({ name: 'End float against a tight max', terms: endFloatTerms(), specVersionId: specs.tight });
    expect(c.result?.verdict).toBe('undecided');
  });

  it('a feeler gap alone: midpoint, u = a/√3, U = k u for the k asked for', async () => {
    const c = await created({ name: 'Tip gap', template: 'feeler-gap', terms: [{ readingId: r.gap, sign: 1 }], coverageFactor: 3 });
    // Midpoint 0.0035 in = 88.9 µm; a = 12.7 µm; u = a/√3 (JCGM 100:2008, 4.3.7); U = 3u (6.2.1).
    expect(c.result?.valueUm).toBe(88.9);
    expect(c.result?.standardUncertaintyUm).toBeCloseTo(12.7 / SQRT3, 12);
    expect(c.result?.expandedUncertaintyUm).toBeCloseTo((3 * 12.7) / SQRT3, 12);
    expect(c.result?.verdict).toBeNull();
  });

  it('material removed = before − after', async () => {
    const c = await created({ name: 'Faced off', template: 'material-removed', terms: [{ readingId: r.before, sign: 1 }, { readingId: r.after, sign: -1 }] });
    // 0.5650 − 0.5630 = 0.0020 in = 50.8 µm exactly (× 25.4).
    expect(c.result?.valueUm).toBe(50.8);
  });

  it('says why when the spec figures do not hold together, instead of a result', async () => {
    const c = await created({ name: 'Against a broken spec', terms: endFloatTerms(), specVersionId: specs.broken });
    expect(c.result).toBeNull();
    expect(c.problems[0]).toMatch(/min must not be greater than max/);
  });

  it('notes a newer version of the attached spec, and keeps judging by the one attached', async () => {
    const c = await created({ name: 'End float, versioned', terms: endFloatTerms(), specVersionId: specs.endFloat });
    await specVersion(ownerId, { minValue: '0.001', maxValue: '0.002' }, false, endFloatSpecId);
    const now = clearanceResponseSchema.parse((await owner.agent.get(`/api/clearances/${c.id}`).expect(200)).body).clearance;
    expect(now.spec).toMatchObject({ version: 1, newerVersion: 2 });
    expect(now.result?.verdict).toBe('conforms');
  });
});

describe('refusals name the field', () => {
  it('a reading of another build, and the same reading twice', async () => {
    const res = await createClearance({ name: 'x', terms: [{ readingId: r.bore, sign: 1 }, { readingId: otherBuildReadingId, sign: -1 }] }).expect(400);
    expect(error(res).details[0]?.path).toBe('terms.1.readingId');
    const twice = await createClearance({ name: 'x', terms: [{ readingId: r.bore, sign: 1 }, { readingId: r.bore, sign: -1 }] }).expect(400);
    expect(error(twice).details[0]?.path).toBe('terms.1.readingId');
  });

  it("another builder's unshared spec, a k out of range, and a key that is taken", async () => {
    expect(error(await createClearance({ name: 'x', terms: endFloatTerms(), specVersionId: specs.othersPrivate }).expect(400)).details[0]?.path).toBe('specVersionId');
    expect(error(await createClearance({ name: 'x', terms: endFloatTerms(), coverageFactor: 9 }).expect(400)).details[0]?.path).toBe('coverageFactor');
    const taken = await createClearance({ key: 'end-float', name: 'x', terms: endFloatTerms() }).expect(409);
    expect([error(taken).code, error(taken).details[0]?.path]).toEqual(['key_taken', 'key']);
  });
});

describe('who may read and change clearances', () => {
  let c: ClearanceDto;
  beforeAll(async () => {
    c = await created({ name: 'Access check', terms: endFloatTerms() });
  });

  it('another builder gets 404 for everything', async () => {
    await other.agent.get(`/api/builds/${buildId}/clearances`).expect(404);
    await other.agent.get(`/api/clearances/${c.id}`).expect(404);
    await send(other, 'patch', `/api/clearances/${c.id}`, { lockVersion: 1, name: 'mine' }).expect(404);
    await send(other, 'delete', `/api/clearances/${c.id}`).expect(404);
    await createClearance({ name: 'x', terms: endFloatTerms() }, other).expect(404);
  });

  it('a moderator reads but cannot change (403); a follower cannot create (403)', async () => {
    await moderator.agent.get(`/api/builds/${buildId}/clearances`).expect(200);
    await moderator.agent.get(`/api/clearances/${c.id}`).expect(200);
    await send(moderator, 'patch', `/api/clearances/${c.id}`, { lockVersion: 1, name: 'x' }).expect(403);
    await send(moderator, 'delete', `/api/clearances/${c.id}`).expect(403);
    await createClearance({ name: 'x', terms: endFloatTerms() }, moderator).expect(403);
    await createClearance({ name: 'x', terms: endFloatTerms() }, follower).expect(403);
    await follower.agent.get(`/api/clearances/${c.id}`).expect(404);
  });

  it('an admin reads, cannot edit (403), and may take a clearance down', async () => {
    await admin.agent.get(`/api/clearances/${c.id}`).expect(200);
    await send(admin, 'patch', `/api/clearances/${c.id}`, { lockVersion: 1, name: 'x' }).expect(403);
    await send(admin, 'delete', `/api/clearances/${c.id}`).expect(204);
    await owner.agent.get(`/api/clearances/${c.id}`).expect(404);
  });
});

describe('editing a clearance', () => {
  it('two tabs: the stale save is refused and changes nothing, terms included', async () => {
    const c = await created({ name: 'Two tabs', terms: endFloatTerms(), specVersionId: specs.endFloat });
    await send(owner, 'patch', `/api/clearances/${c.id}`, { lockVersion: 1, name: 'Two tabs, renamed' }).expect(200);
    const refused = await send(owner, 'patch', `/api/clearances/${c.id}`, { lockVersion: 1, terms: [{ readingId: r.gap, sign: 1 }] }).expect(409);
    expect(error(refused).code).toBe('edit_conflict');
    const terms = await ClearanceTerm.findAll({ where: { clearanceId: c.id }, order: [['position', 'ASC']] });
    expect(terms.map((t) => [t.readingId, t.sign])).toEqual([
      [r.bore, 1],
      [r.rotor, -1],
    ]);
    expect((await Clearance.findByPk(c.id))!.name).toBe('Two tabs, renamed');
  });

  it('replaces the terms as a whole, and sends a checked clearance back to unchecked', async () => {
    const c = await created({ name: 'Replace terms', terms: endFloatTerms() });
    await Clearance.update({ reviewState: 'checked' }, { where: { id: c.id } });
    const res = await send(owner, 'patch', `/api/clearances/${c.id}`, { lockVersion: 1, terms: [{ readingId: r.before, sign: 1 }, { readingId: r.after, sign: -1 }] }).expect(200);
    const now = clearanceResponseSchema.parse(res.body).clearance;
    expect(now.terms.map((t) => t.readingId)).toEqual([r.before, r.after]);
    expect(now.reviewState).toBe('unchecked');
    expect(now.result?.valueUm).toBe(50.8);
    expect(now.lockVersion).toBe(2);
    expect(error(await send(owner, 'patch', `/api/clearances/${c.id}`, { lockVersion: 2, terms: [{ readingId: otherBuildReadingId, sign: 1 }] }).expect(400)).details[0]?.path).toBe(
      'terms.0.readingId',
    );
  });
});

describe('removing a clearance', () => {
  it('is refused while a story cites it (and so is changing its key); otherwise it goes', async () => {
    const c = await created({ name: 'Cited end float', terms: endFloatTerms() });
    await Story.create({ buildId, title: 'End float, after facing (test)', body: `End float is now [four and a half thou](clearance:${c.key}).`, createdBy: ownerId, updatedBy: ownerId });
    const refused = await send(owner, 'delete', `/api/clearances/${c.id}`).expect(409);
    expect(error(refused).code).toBe('clearance_cited');
    expect(error(refused).message).toContain('End float, after facing (test)');
    expect(error(await send(owner, 'patch', `/api/clearances/${c.id}`, { lockVersion: 1, key: 'something-else' }).expect(409)).code).toBe('clearance_cited');
    const free = await created({ name: 'Uncited', terms: endFloatTerms() });
    await send(owner, 'delete', `/api/clearances/${free.id}`).expect(204);
    expect(await ClearanceTerm.count({ where: { clearanceId: free.id } })).toBe(0);
  });
});

describe('listing clearances', () => {
  it('pages by keyset and costs the same number of queries for a short page as for a long one', async () => {
    const all = clearanceListResponseSchema.parse((await owner.agent.get(`/api/builds/${buildId}/clearances`).expect(200)).body);
    expect(all.items.length).toBeGreaterThan(5);
    const first = clearanceListResponseSchema.parse((await owner.agent.get(`/api/builds/${buildId}/clearances?limit=2`).expect(200)).body);
    expect(first.items.map((c) => c.id)).toEqual(all.items.slice(0, 2).map((c) => c.id));
    const next = clearanceListResponseSchema.parse((await owner.agent.get(`/api/builds/${buildId}/clearances?limit=2&after=${first.nextAfter}`).expect(200)).body);
    expect(next.items.map((c) => c.id)).toEqual(all.items.slice(2, 4).map((c) => c.id));

    const sqls: string[] = [];
    t.sequelize.addHook('afterQuery', 'count-clearance-queries', ((_o: unknown, q: { sql?: string }) => {
      if (q.sql && /"(clearances|clearance_terms|readings|spec_versions|specs|moments|instruments|parts|zero_checks)"/.test(q.sql)) sqls.push(q.sql);
    }) as never);
    try {
      const count = async (url: string) => {
        sqls.length = 0;
        await owner.agent.get(url).expect(200);
        return sqls.length;
      };
      const short = await count(`/api/builds/${buildId}/clearances?limit=2`);
      const long = await count(`/api/builds/${buildId}/clearances?limit=500`);
      expect(short).toBeGreaterThan(3);
      expect(long).toBe(short);
    } finally {
      t.sequelize.removeHook('afterQuery', 'count-clearance-queries');
    }
  });
});

describe('an instrument with a calibration in the register', () => {
  it('shares its calibration between the readings taken with it: a difference cancels it, a sum adds it', async () => {
    // Invented test micrometer: certificate U = 0.00012 in with k = 2, so u = 0.00006 in (GUM 4.3.3).
    const res = await send(owner, 'post', '/api/instruments', {
      name: 'Test calibrated micrometer (invented)',
      kind: 'outside-micrometer',
      unit: 'in',
      resolution: '0.0001',
      calibrationUncertainty: '0.00012',
      calibrationCoverageFactor: 2,
      maxPermissibleError: '0.0001',
    }).expect(201);
    expect(res.body.instrument).toMatchObject({ calibrationUncertainty: '0.00012', calibrationCoverageFactor: 2, maxPermissibleError: '0.0001' });
    const instrumentId = res.body.instrument.id as number;
    const log = async (name: string, value: string) =>
      (await send(owner, 'post', `/api/builds/${buildId}/readings`, { momentId, takenOn: '2026-11-20', instrumentId, name, kind: 'direct', value }).expect(201)).body.reading;
    const outer = await log('Outer rotor height (calibrated)', '0.5642');
    const inner = await log('Inner rotor height (calibrated)', '0.5595');
    expect(outer.engineInstrument).toEqual({
      name: `i${instrumentId}`,
      entry: { calibration: { expandedUncertainty: '0.00012', coverageFactor: 2, unit: 'in' }, maxPermissibleError: { value: '0.0001', unit: 'in' } },
    });
    // Alone, a reading carries the calibration: u = √((2.54/(2√3))² + (0.00006 × 25 400)²) µm (GUM eq. 10).
    expect(outer.result.standardUncertaintyUm).toBeCloseTo(Math.hypot(2.54 / (2 * SQRT3), 0.00006 * 25_400), 9);

    const uRes = 2.54 / (2 * SQRT3);
    const difference = await created({ name: 'Outer − inner (calibrated)', terms: [{ readingId: outer.id, sign: 1 }, { readingId: inner.id, sign: -1 }] });
    // The shared calibration enters once with sensitivity 1 − 1 = 0 (GUM 5.2.2, eq. 13 with r = 1):
    // only the two resolutions remain, u_c = √2 · 2.54/(2√3) µm. The certificate supersedes the MPE.
    expect(difference.result!.standardUncertaintyUm).toBeCloseTo(Math.SQRT2 * uRes, 9);
    const shared = difference.result!.budget!.find((line) => line.instrument === `i${instrumentId}`)!;
    expect(shared.sensitivity).toBe(0);
    expect(shared.reading).toBe(`${outer.key}, ${inner.key}`);

    const sum = await created({ name: 'Outer + inner (calibrated)', terms: [{ readingId: outer.id, sign: 1 }, { readingId: inner.id, sign: 1 }] });
    // Summed, it adds linearly: 2 × 0.00006 in = 3.048 µm, in quadrature with the resolutions.
    expect(sum.result!.standardUncertaintyUm).toBeCloseTo(Math.hypot(Math.SQRT2 * uRes, 2 * 0.00006 * 25_400), 9);
  });

  it('refuses a calibration U without its k, naming the field', async () => {
    const res = await send(owner, 'post', '/api/instruments', {
      name: 'Half a certificate (invented)',
      kind: 'outside-micrometer',
      unit: 'in',
      resolution: '0.0001',
      calibrationUncertainty: '0.00012',
    }).expect(400);
    expect(error(res).details.map((d) => d.path)).toContain('calibrationCoverageFactor');
  });
});
