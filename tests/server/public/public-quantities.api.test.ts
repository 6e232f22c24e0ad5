import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import * as pdfjs from 'pdfjs-dist/legacy/build/pdf.mjs';
import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { evaluateCalc } from '@shared/measure/calc';
import { publicBuildSchema } from '@shared/public/public-build.schema';
import { publicStorySchema, type PublicClaim, type PublicStory } from '@shared/public/public-story.schema';
import { partSheetSchema, verifySheetSchema } from '@shared/public/sheet.schema';
import { recomputeRequest } from '@/features/public/lib/recompute';
import { readingShown, resultShown, shownText } from '@/features/public/lib/figures';
import { StoryPublication } from '../../../server/features/review/review.model';
import { Story } from '../../../server/features/stories/story.model';
import { makeTestClip } from '../../support/clips';
import { sessionFor, type Session } from '../../support/matrix-fixtures';
import { makeReviewFixture, publishThroughReview, quantityKeys, type ReviewFixture } from '../../support/review-fixtures';
import { startTestApp, type TestApp } from '../../support/test-app';

/*
 * Published evidence of other quantities than a length: a torque reading and a torque result,
 * and a compression ratio worked out by a formula from cc'd volumes, judged against a ratio spec
 * (figures invented, tests/support/review-fixtures.ts `makeQuantityEvidence`). And a publication
 * made before other quantities could be stored (µm figures only, no quantity) still reads.
 */

/** NIST SP 811 (2008) B.8: 1 lbf·ft = 0.45359237 kg × 9.80665 m/s² × 0.3048 m = 1.3558179483314004 N·m, exactly. */
const N_M_PER_LBF_FT = 0.45359237 * 9.80665 * 0.3048;

let t: TestApp;
let work: string;
let owner: Session;
let moderator: Session;
/** A story citing an end float, a torque reading, a torque result and a compression ratio. */
let f: ReviewFixture;
/** A story of lengths only whose stored publication is rewritten in the shape of an older one. */
let old: ReviewFixture;

beforeAll(async () => {
  work = fs.mkdtempSync(path.join(os.tmpdir(), 'benchproof-public-quantities-'));
  const clipFile = await makeTestClip({ seconds: 2, format: 'mp4-h264', dir: work });
  t = await startTestApp({}, { jobs: true });
  [owner, moderator] = await Promise.all([sessionFor(t, 'owner'), sessionFor(t, 'moderator')]);
  f = await makeReviewFixture(owner, { clipFile, title: 'Public test: torque and compression', quantities: true });
  expect(await publishThroughReview(owner, moderator, f)).toBe(1);

  old = await makeReviewFixture(owner, { clipFile, title: 'Public test: an older publication' });
  await publishThroughReview(owner, moderator, old);
  // Before anyone reads it (the page cache keys on the publication): back to the shape publications had before other quantities.
  // Publications are append-only (a trigger refuses updates): lifted for this one write, as the republish tests do.
  const story = (await Story.findByPk(old.story.id))!;
  const sequelize = StoryPublication.sequelize!;
  await sequelize.transaction(async (transaction) => {
    const publication = (await StoryPublication.findByPk(story.publishedPublicationId!, { transaction }))!;
    await sequelize.query('ALTER TABLE story_publications DISABLE TRIGGER story_publications_append_only', { transaction });
    await publication.update({ evidence: olderShape(publication.evidence) }, { transaction });
    await sequelize.query('ALTER TABLE story_publications ENABLE TRIGGER story_publications_append_only', { transaction });
  });
}, 300_000);

afterAll(async () => {
  await t?.close();
  if (work) fs.rmSync(work, { recursive: true, force: true });
});

/** Strips what publications gained with other quantities and formulas: `quantity`, the figures in the unit, formulas and symbols. */
function olderShape(evidence: unknown): Record<string, unknown> {
  const e = structuredClone(evidence) as {
    readings: { result: Record<string, unknown> }[];
    clearances: (Record<string, unknown> & { result: Record<string, unknown> | null; terms: Record<string, unknown>[] })[];
  };
  for (const r of e.readings) for (const k of ['quantity', 'value', 'standardUncertainty']) delete r.result[k];
  for (const c of e.clearances) {
    for (const k of ['formula', 'constants', 'resultUnit']) delete c[k];
    for (const term of c.terms) delete term.symbol;
    if (c.result) for (const k of ['quantity', 'value', 'standardUncertainty', 'expandedUncertainty', 'interval', 'bandInUnit']) delete c.result[k];
  }
  return e as unknown as Record<string, unknown>;
}

async function publicStory(storyId: number, units?: 'imperial' | 'metric'): Promise<PublicStory> {
  const res = await request(t.app).get(`/api/public/stories/${storyId}${units ? `?units=${units}` : ''}`).expect(200);
  return publicStorySchema.parse(res.body);
}

function claimOf(story: PublicStory, kind: PublicClaim['kind'], key: string): PublicClaim {
  const claim = story.claims.find((c) => c.kind === kind && c.key === key);
  if (!claim) throw new Error(`no ${kind} claim ${key}`);
  return claim;
}

/** U to two significant digits, as format-quantity writes it (GUM 7.2.6). */
const twoSignificant = (u: number) => u.toFixed(Math.max(0, 1 - Math.floor(Math.log10(u))));

describe('a published story citing a torque reading and a compression-ratio formula', () => {
  it('carries the torque reading’s value, U and unit, as typed, and its claim agrees', async () => {
    const story = await publicStory(f.story.id);
    const claim = claimOf(story, 'reading', quantityKeys.torque);
    expect(claim.state).toBe('ok');
    expect(claim.text).toBe('torqued to 35 lbf·ft');
    const reading = claim.readings[0]!;
    expect(reading).toMatchObject({ quantity: 'torque', unit: 'lbf_ft', value: '35', valueUm: null, standardUncertaintyUm: null, expandedUncertaintyUm: null, estimate: 35, converted: null });
    // A reading is quoted at k = 2 (GUM 6.2.1, 6.3.3), as claims are checked.
    expect(reading.expandedUncertainty).toBeCloseTo(2 * reading.standardUncertainty!, 12);
    expect(reading.expandedUncertainty).toBeGreaterThan(0);
    expect(reading.display).toBe(`35 lbf·ft ± ${twoSignificant(reading.expandedUncertainty!)} lbf·ft (k = 2)`);
    expect(claim.display).toBe(reading.display);
    expect(reading.engine).toMatchObject({ kind: 'direct', unit: 'lbf_ft' });
    // The page shows it as judged in the builder's system…
    expect(shownText(readingShown(reading), 'imperial').main).toBe(`35 lbf·ft ± ${twoSignificant(reading.expandedUncertainty!)} lbf·ft`);
  });

  it('carries the compression ratio with its formula, constants, term symbols, limits in its unit and its verdict', async () => {
    const story = await publicStory(f.story.id);
    const claim = claimOf(story, 'clearance', quantityKeys.ratio);
    expect(claim.state).toBe('ok');
    expect(claim.verdict).toBe('conforms');
    const c = claim.clearance!;
    expect(c).toMatchObject({
      quantity: 'ratio',
      unit: '1',
      valueUm: null,
      expandedUncertaintyUm: null,
      band: null,
      bandInUnit: { min: 9.5, max: 10.5, preferredMin: null, preferredMax: null, reject: null },
      verdict: 'conforms',
      rule: 'guarded',
      formula: '(swept + chamber + dish) / (chamber + dish)',
      constants: { swept: { value: '589.0', unit: 'cc' } },
      resultUnit: null,
      converted: null,
    });
    expect(c.terms.map((t) => [t.readingKey, t.symbol])).toEqual([
      [quantityKeys.chamber, 'chamber'],
      [quantityKeys.dish, 'dish'],
    ]);
    // (589.0 + 60.2 + 4.0) / (60.2 + 4.0) = 653.2 / 64.2 = 10.17445… (plain arithmetic).
    expect(c.value).toBeCloseTo(653.2 / 64.2, 9);
    expect(c.expandedUncertainty).toBeGreaterThan(0);
    expect(c.interval![0]).toBeLessThan(c.value!);
    expect(c.interval![1]).toBeGreaterThan(c.value!);
    // A ratio of volumes is not linear in them: the engine's interval may be asymmetric (JCGM 101), and the display says so.
    expect(c.display).toMatch(/^10\.\d+(, 95 % interval 10\.\d+ to 10\.\d+| ± 0\.\d+ \(95 %, k = [\d.]+\))$/);
    // The two readings it uses, each in its own unit.
    expect(claim.readings.map((r) => [r.key, r.quantity, r.unit, r.estimate])).toEqual([
      [quantityKeys.chamber, 'volume', 'cc', 60.2],
      [quantityKeys.dish, 'volume', 'cc', 4],
    ]);
    // A ratio has no unit to show: its value as judged ± U (the larger side of the interval), in either system.
    const shown = shownText(resultShown(c), 'metric').main;
    expect(shown).toBe(`${/^[\d.]+/.exec(c.display)![0]} ± ${twoSignificant(c.expandedUncertainty!)}`);
    expect(shownText(resultShown(c), 'imperial').main).toBe(shown);
  });

  it('carries the torque result’s verdict against its spec in lbf·ft', async () => {
    const claim = claimOf(await publicStory(f.story.id), 'clearance', quantityKeys.torqueResult);
    expect(claim.state).toBe('ok');
    expect(claim.clearance).toMatchObject({ quantity: 'torque', unit: 'lbf_ft', valueUm: null, value: 35, verdict: 'conforms', bandInUnit: { min: 30, max: 40 } });
  });

  it('gives a metric reader the torque in N·m at the resolution it was read to, and leaves cc and the ratio alone', async () => {
    const story = await publicStory(f.story.id, 'metric');
    expect(story.units).toBe('metric');
    const reading = claimOf(story, 'reading', quantityKeys.torque).readings[0]!;
    // 35 lbf·ft = 47.45 N·m; read to 1 lbf·ft = 1.36 N·m, so shown to whole N·m (NIST SP 811 B.7.2).
    const u = twoSignificant(reading.expandedUncertainty! * N_M_PER_LBF_FT);
    expect(reading.converted).toBe(`47 N·m ± ${u} N·m (k = 2)`);
    expect(shownText(readingShown(reading), 'metric').main).toBe(`47 N·m ± ${u} N·m`);
    const torque = claimOf(story, 'clearance', quantityKeys.torqueResult).clearance!;
    expect(torque.converted).toMatch(/^47(\.\d+)? N·m ± [\d.]+ N·m \(k = [\d.]+\)$/);
    // cc is a metric unit: nothing to convert, and the ratio has no unit.
    const ratio = claimOf(story, 'clearance', quantityKeys.ratio);
    expect(ratio.clearance!.converted).toBeNull();
    expect(ratio.readings.every((r) => r.converted === null)).toBe(true);
    // The lengths are converted as they always were.
    expect(claimOf(story, 'clearance', 'end-float').clearance!.converted).toMatch(/^0\.\d+ mm ± 0\.\d+ mm \(k = [\d.]+\)$/);
  });

  it('lets a reader recompute the formula result with its formula and constants, and the calculator agrees', async () => {
    const claim = claimOf(await publicStory(f.story.id), 'clearance', quantityKeys.ratio);
    const req = recomputeRequest(claim.readings, claim.clearance);
    expect(req).toMatchObject({
      formula: '(swept + chamber + dish) / (chamber + dish)',
      constants: { swept: { value: '589.0', unit: 'cc' } },
      resultUnit: '1',
      spec: { unit: '1', min: '9.5', max: '10.5', rule: 'guarded' },
    });
    expect(Object.keys(req!.readings)).toEqual(['chamber', 'dish']);
    // Through the public calculator route, as the page sends it.
    const res = await request(t.app).post('/api/calc').send(req!).expect(200);
    expect(res.body.unit).toBe('1');
    expect(res.body.value).toBeCloseTo(claim.clearance!.value!, 12);
    expect(res.body.expandedUncertainty).toBeCloseTo(claim.clearance!.expandedUncertainty!, 9);
    expect(res.body.verdict).toBe('conforms');
    // And in the page's own engine.
    expect(evaluateCalc(req!).judgement?.verdict).toBe('conforms');
  });

  it('lets a reader recompute the torque reading alone', async () => {
    const claim = claimOf(await publicStory(f.story.id), 'reading', quantityKeys.torque);
    const req = recomputeRequest(claim.readings, null);
    const res = await request(t.app).post('/api/calc').send(req!).expect(200);
    expect(res.body).toMatchObject({ unit: 'lbf_ft', value: 35, coverageFactor: 2 });
    expect(res.body.standardUncertainty).toBeCloseTo(claim.readings[0]!.standardUncertainty!, 12);
    // At k = 2, as the reading is quoted: the published U.
    expect(res.body.expandedUncertainty).toBeCloseTo(claim.readings[0]!.expandedUncertainty!, 12);
  });

  it('summarises the torque and the ratio on the public build page in their own units', async () => {
    const build = publicBuildSchema.parse((await request(t.app).get(`/api/public/builds/${f.buildId}`).expect(200)).body);
    const torque = build.clearances.find((c) => c.key === quantityKeys.torqueResult)!;
    expect(torque).toMatchObject({ quantity: 'torque', unit: 'lbf_ft' });
    expect(torque.latest).toMatchObject({ valueUm: null, value: 35, verdict: 'conforms' });
    const ratio = build.clearances.find((c) => c.key === quantityKeys.ratio)!;
    expect(ratio).toMatchObject({ quantity: 'ratio', unit: '1' });
    expect(ratio.latest.value).toBeCloseTo(653.2 / 64.2, 9);
  });
});

describe('the inspection sheet of a part with a torque and a compression ratio', () => {
  it('lists the torque result with its symbol, its reading as read, and the ratio with its limits', async () => {
    const sheet = partSheetSchema.parse((await request(t.app).get(`/api/public/parts/${f.partId}/sheet`).expect(200)).body);
    const torque = sheet.clearances.find((c) => c.key === quantityKeys.torqueResult)!;
    expect(torque).toMatchObject({ quantity: 'torque', unit: 'lbf_ft', valueUm: null, value: 35, verdict: 'conforms', verdictWords: 'within spec' });
    expect(torque.display).toMatch(/^35(\.\d+)? lbf·ft ± [\d.]+ lbf·ft \(95 %, k = [\d.]+\)$/);
    expect(torque.limits).toEqual({ band: '30–40 lbf·ft', preferred: null, reject: null });
    expect(torque.readings).toEqual([expect.objectContaining({ key: quantityKeys.torque, display: '35 lbf·ft', read: '35 lbf·ft', figure: '35 lbf·ft', zeroOffset: null })]);
    const ratio = sheet.clearances.find((c) => c.key === quantityKeys.ratio)!;
    expect(ratio).toMatchObject({ quantity: 'ratio', unit: '1', verdict: 'conforms' });
    expect(ratio.limits.band).toBe('9.5–10.5');
    // A volume in a ratio keeps its own unit.
    expect(ratio.readings.map((r) => r.figure)).toEqual(['60.2 cc', '4.0 cc']);
    expect(sheet.instruments.map((i) => i.name)).toEqual(expect.arrayContaining(['Click torque wrench 20–100 lbf·ft (test)', 'Burette 100 cc (test)']));
    // The length clearance is on it as before.
    expect(sheet.clearances.find((c) => c.key === 'end-float')).toMatchObject({ quantity: 'length', unit: 'in', limits: { band: '0.003–0.005 in' } });
  });

  it('verifies the same figures', async () => {
    const verify = verifySheetSchema.parse((await request(t.app).get(`/api/public/verify/parts/${f.partId}?story=${f.story.id}&rev=1`).expect(200)).body);
    expect(verify.current).toBe(true);
    expect(verify.sheet!.clearances.find((c) => c.key === quantityKeys.torqueResult)!.readings[0]!.figure).toBe('35 lbf·ft');
  });

  it('prints the torque with its symbol and the ratio on the PDF', async () => {
    const res = await request(t.app)
      .get(`/sheets/parts/${f.partId}.pdf`)
      .buffer(true)
      .parse((r, cb) => {
        const chunks: Buffer[] = [];
        r.on('data', (c: Buffer) => chunks.push(c));
        r.on('end', () => cb(null, Buffer.concat(chunks)));
      })
      .expect(200);
    const doc = await pdfjs.getDocument({ data: new Uint8Array(res.body as Buffer), disableFontFace: true, useSystemFonts: false }).promise;
    const parts: string[] = [];
    for (let n = 1; n <= doc.numPages; n += 1) {
      const content = await (await doc.getPage(n)).getTextContent();
      parts.push(content.items.map((i) => ('str' in i ? i.str : '')).join(' '));
    }
    await doc.destroy();
    const text = parts.join(' ').replace(/\s+/g, ' ');
    expect(text).toContain('Head bolt torque: 35 lbf·ft');
    expect(text).toContain('Spec band 30–40 lbf·ft');
    expect(text).toContain('Spec band 9.5–10.5');
    expect(text).toContain('Chamber volume: 60.2 cc');
    expect(text).toContain('Results');
  });
});

describe('a publication made before other quantities could be stored', () => {
  it('still reads: lengths with their µm figures, the same display and claims as judged, the figures in the unit filled in', async () => {
    const story = await publicStory(old.story.id);
    const depth = claimOf(story, 'reading', 'bore-depth');
    expect(depth.state).toBe('ok');
    const reading = depth.readings[0]!;
    expect(reading).toMatchObject({ quantity: 'length', unit: 'in', valueUm: old.readings.depth.result.valueUm, display: depth.display });
    // 0.5642 in exactly (1 in = 25 400 µm, NIST SP 811 B.8).
    expect(reading.estimate).toBeCloseTo(0.5642, 12);
    const endFloat = claimOf(story, 'clearance', 'end-float');
    expect(endFloat.state).toBe('ok');
    expect(endFloat.clearance).toMatchObject({ quantity: 'length', unit: 'in', valueUm: old.clearance.result!.valueUm, formula: null, resultUnit: null, verdict: 'conforms' });
    expect(endFloat.clearance!.terms.every((term) => term.symbol === null)).toBe(true);
    // 0.5642 in − 0.5595 in = 0.0047 in.
    expect(endFloat.clearance!.value).toBeCloseTo(0.0047, 12);
    // The same page as a story published today shows for the same figures.
    const today = claimOf(await publicStory(f.story.id), 'clearance', 'end-float');
    expect(shownText(resultShown(endFloat.clearance!), 'metric')).toEqual(shownText(resultShown(today.clearance!), 'metric'));
  });

  it('parses as an older page sent it (µm figures, no quantity) and renders the same figures', async () => {
    const now = (await request(t.app).get(`/api/public/stories/${old.story.id}`).expect(200)).body as PublicStory;
    const before = structuredClone(now) as unknown as { claims: { readings: Record<string, unknown>[]; clearance: Record<string, unknown> | null }[] };
    for (const claim of before.claims) {
      for (const r of claim.readings) for (const k of ['quantity', 'estimate', 'standardUncertainty', 'expandedUncertainty']) delete r[k];
      if (claim.clearance) for (const k of ['quantity', 'value', 'standardUncertainty', 'expandedUncertainty', 'interval', 'bandInUnit', 'formula', 'constants', 'resultUnit']) delete claim.clearance[k];
    }
    const parsed = publicStorySchema.parse(before);
    const clearance = claimOf(parsed, 'clearance', 'end-float').clearance!;
    expect(clearance.quantity).toBe('length');
    expect(clearance.value).toBeUndefined();
    for (const system of ['imperial', 'metric'] as const) {
      expect(shownText(resultShown(clearance), system)).toEqual(shownText(resultShown(claimOf(now, 'clearance', 'end-float').clearance!), system));
      const r = claimOf(parsed, 'reading', 'bore-depth').readings[0]!;
      expect(shownText(readingShown(r), system)).toEqual(shownText(readingShown(claimOf(now, 'reading', 'bore-depth').readings[0]!), system));
    }
    // 0.0047 in in thou and µm-based figures, exactly as lengths always read.
    expect(shownText(resultShown(clearance), 'imperial').main).toMatch(/^0\.00470* in ± 0\.\d+ in$/);
  });
});
