import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import jsQR from 'jsqr';
import * as pdfjs from 'pdfjs-dist/legacy/build/pdf.mjs';
import { PNG } from 'pngjs';
import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { clearanceResponseSchema } from '@shared/clearances/clearance.schema';
import { instrumentResponseSchema } from '@shared/instruments/instrument.schema';
import { partSheetSchema, verifySheetSchema, type PartSheet } from '@shared/public/sheet.schema';
import { sheetQrPng } from '../../../server/features/sheets/sheet.pdf';
import { verifyQueryMessages } from '../../../server/features/sheets/sheets.routes';
import { makeTestClip } from '../../support/clips';
import { sessionFor, type Session } from '../../support/matrix-fixtures';
import { fixtureBody, lockVersionOf, makeReviewFixture, move, publishThroughReview, type ReviewFixture } from '../../support/review-fixtures';
import { startTestApp, type TestApp } from '../../support/test-app';

const PUBLIC_URL = 'http://127.0.0.1:3999';

let t: TestApp;
let work: string;
let owner: Session;
let otherBuilder: Session;
let moderator: Session;
let published: ReviewFixture;
let draft: ReviewFixture;
let inReview: ReviewFixture;
let withdrawn: ReviewFixture;
let limited: ReviewFixture;
let sheet: PartSheet;

const send = (s: Session, verb: 'post' | 'patch', url: string, body: object) => s.agent[verb](url).set('x-csrf-token', s.token).send(body);

/**
 * The invented pump of the review fixture, judged against a spec with a preferred band and a
 * reject limit, its outside micrometer given its own serial and a zero check on the day that read
 * one tenth high: rotor height 0.5595 in − 0.0001 in = 0.5594 in, so the end float is
 * 0.5642 in − 0.5594 in = 0.0048 in (exact decimal arithmetic). That is inside the 0.0020–0.0060 in
 * band and clear of the 0.0080 in reject limit, but outside the 0.0030–0.0040 in preferred band, by
 * more than U ≈ 0.00008 in either way (the guarded rule, ISO 14253-1).
 */
async function makeLimitedFixture(clipFile: string): Promise<ReviewFixture> {
  const f = await makeReviewFixture(owner, {
    clipFile,
    title: 'Sheet test: limits',
    body: fixtureBody({ clearanceWords: 'End float is 0.0048 in, within spec' }),
  });
  const mic = instrumentResponseSchema.parse((await owner.agent.get(`/api/instruments/${f.instruments.mic}`).expect(200)).body).instrument;
  await send(owner, 'patch', `/api/instruments/${mic.id}`, { serial: 'OM-1147-T', lockVersion: mic.lockVersion }).expect(200);
  await send(owner, 'post', `/api/instruments/${mic.id}/zero-checks`, { checkedOn: '2026-11-20', standardSize: '0.0000', shown: '0.0001' }).expect(201);
  const spec = (
    await send(owner, 'post', '/api/specs', {
      name: 'Pump end float with limits (invented, test)',
      appliesTo: 'Invented flat-twin rotor oil pump',
      unit: 'in',
      min: '0.0020',
      max: '0.0060',
      preferredMin: '0.0030',
      preferredMax: '0.0040',
      reject: '0.0080',
      rule: 'guarded',
      source: { kind: 'manual', text: 'Invented workshop manual, section 4 (test figures)' },
    }).expect(201)
  ).body as { spec: { latest: { id: number } } };
  const clearance = clearanceResponseSchema.parse(
    (await send(owner, 'patch', `/api/clearances/${f.clearance.id}`, { specVersionId: spec.spec.latest.id, lockVersion: f.clearance.lockVersion }).expect(200)).body,
  ).clearance;
  return { ...f, clearance };
}

beforeAll(async () => {
  work = fs.mkdtempSync(path.join(os.tmpdir(), 'benchproof-sheets-'));
  const clipFile = await makeTestClip({ seconds: 2, format: 'mp4-h264', dir: work });
  t = await startTestApp({}, { jobs: true });
  [owner, otherBuilder, moderator] = await Promise.all([sessionFor(t, 'owner'), sessionFor(t, 'otherBuilder'), sessionFor(t, 'moderator')]);
  published = await makeReviewFixture(owner, { clipFile, title: 'Sheet test: published' });
  await publishThroughReview(owner, moderator, published);
  draft = await makeReviewFixture(owner, { clipFile, title: 'Sheet test: draft' });
  inReview = await makeReviewFixture(owner, { clipFile, title: 'Sheet test: in review' });
  await move(owner, inReview.story.id, 'submit');
  withdrawn = await makeReviewFixture(owner, { clipFile, title: 'Sheet test: withdrawn' });
  await publishThroughReview(owner, moderator, withdrawn);
  await move(moderator, withdrawn.story.id, 'withdraw', { reason: 'the still does not show the blade' });
  limited = await makeLimitedFixture(clipFile);
  await publishThroughReview(owner, moderator, limited);
  sheet = partSheetSchema.parse((await request(t.app).get(`/api/public/parts/${published.partId}/sheet`).expect(200)).body);
}, 240_000);

afterAll(async () => {
  await t?.close();
  if (work) fs.rmSync(work, { recursive: true, force: true });
});

/** GET a sheet's PDF as bytes. */
async function pdfOf(partId: number): Promise<Uint8Array> {
  const res = await request(t.app)
    .get(`/sheets/parts/${partId}.pdf`)
    .buffer(true)
    .parse((r, cb) => {
      const chunks: Buffer[] = [];
      r.on('data', (c: Buffer) => chunks.push(c));
      r.on('end', () => cb(null, Buffer.concat(chunks)));
    })
    .expect(200);
  return new Uint8Array(res.body as Buffer);
}

/** Every text item of every page, joined with spaces. */
async function pdfText(data: Uint8Array): Promise<{ text: string; images: number; qrImages: { width: number; height: number; rgba: Uint8ClampedArray }[] }> {
  const doc = await pdfjs.getDocument({ data, disableFontFace: true, useSystemFonts: false }).promise;
  const parts: string[] = [];
  let images = 0;
  const qrImages: { width: number; height: number; rgba: Uint8ClampedArray }[] = [];
  for (let n = 1; n <= doc.numPages; n += 1) {
    const page = await doc.getPage(n);
    const content = await page.getTextContent();
    parts.push(content.items.map((i) => ('str' in i ? i.str : '')).join(' '));
    const ops = await page.getOperatorList();
    for (let i = 0; i < ops.fnArray.length; i += 1) {
      if (ops.fnArray[i] !== pdfjs.OPS.paintImageXObject) continue;
      images += 1;
      const name = (ops.argsArray[i] as [string])[0];
      const img = (await new Promise((resolve) => page.objs.get(name, resolve))) as { width: number; height: number; data: Uint8ClampedArray; kind: number };
      qrImages.push({ width: img.width, height: img.height, rgba: toRgba(img) });
    }
  }
  await doc.destroy();
  return { text: parts.join(' ').replace(/\s+/g, ' '), images, qrImages };
}

/** pdf.js hands images over as grey (1 bit), RGB or RGBA; jsQR wants RGBA. */
function toRgba(img: { width: number; height: number; data: Uint8ClampedArray; kind: number }): Uint8ClampedArray {
  const pixels = img.width * img.height;
  if (img.kind === pdfjs.ImageKind.RGBA_32BPP) return img.data;
  const out = new Uint8ClampedArray(pixels * 4);
  if (img.kind === pdfjs.ImageKind.RGB_24BPP) {
    for (let p = 0; p < pixels; p += 1) {
      out[p * 4] = img.data[p * 3]!;
      out[p * 4 + 1] = img.data[p * 3 + 1]!;
      out[p * 4 + 2] = img.data[p * 3 + 2]!;
      out[p * 4 + 3] = 255;
    }
    return out;
  }
  const rowBytes = Math.ceil(img.width / 8);
  for (let y = 0; y < img.height; y += 1) {
    for (let x = 0; x < img.width; x += 1) {
      const bit = (img.data[y * rowBytes + (x >> 3)]! >> (7 - (x & 7))) & 1;
      out.fill(bit ? 255 : 0, (y * img.width + x) * 4, (y * img.width + x) * 4 + 3);
      out[(y * img.width + x) * 4 + 3] = 255;
    }
  }
  return out;
}

describe('the inspection sheet of a part', () => {
  it('lists the checked clearances of public entries with readings on the part, with U, verdict, rule and spec', () => {
    expect(sheet.part).toEqual({ id: published.partId, name: 'Oil pump (invented)', serial: 'TP-0417' });
    expect(sheet.builder.displayName).toBe('Ines Calloway');
    expect(sheet.publications.map((p) => [p.storyId, p.revision, p.publishedBy])).toEqual([[published.story.id, 1, 'Dagny Orlov']]);
    expect(sheet.clearances).toHaveLength(1);
    const c = sheet.clearances[0]!;
    // 0.5642 in − 0.5595 in = 0.0047 in = 119.38 µm (1 in = 25.4 mm exactly).
    expect(c.valueUm).toBe(119.38);
    // Two 0.0001 in resolutions (GUM F.2.2.1), rectangular and equal, add to a triangular distribution
    // of half-width 2.54 µm: 95 % interval ±2.54(1 − √0.05) µm ≈ ±1.972 µm (JCGM 101:2008 6.4.2), by Monte Carlo.
    expect(c.expandedUncertaintyUm).toBeCloseTo(2.54 * (1 - Math.sqrt(0.05)), 1);
    expect(c).toMatchObject({ verdict: 'conforms', verdictWords: 'within spec', rule: 'guarded', checkedBy: 'Dagny Orlov', storyId: published.story.id, revision: 1 });
    expect(c.display).toBe(published.clearance.result!.display);
    expect(c.spec).toMatchObject({ name: 'Pump end float (invented, test)', version: 1, sourceText: 'Invented workshop manual, section 3 (test figures)' });
    expect(c.readings.map((r) => [r.key, r.instrumentName])).toEqual([
      ['bore-depth', 'Depth micrometer 0–6 in (test)'],
      ['rotor-height', 'Outside micrometer 0–1 in (test)'],
    ]);
    expect(sheet.instruments.map((i) => [i.name, i.calibration])).toEqual([
      ['Depth micrometer 0–6 in (test)', 'in-date'],
      ['Outside micrometer 0–1 in (test)', 'in-date'],
    ]);
    expect(sheet.checkedBy).toEqual(['Dagny Orlov']);
    expect(sheet.verifyUrl).toBe(`${PUBLIC_URL}/verify/parts/${published.partId}?story=${published.story.id}&rev=1`);
    expect(sheet.caution).toContain('manufacturer’s manual');
  });

  it('does not exist for parts of drafts, stories in review or withdrawn stories, for anyone', async () => {
    for (const s of [request.agent(t.app), otherBuilder.agent, owner.agent]) {
      for (const x of [draft, inReview, withdrawn]) {
        expect((await s.get(`/api/public/parts/${x.partId}/sheet`)).status).toBe(404);
        expect((await s.get(`/sheets/parts/${x.partId}.pdf`)).status).toBe(404);
      }
    }
    expect((await request(t.app).get('/api/public/parts/999999999/sheet')).status).toBe(404);
  });
});

describe('the printable sheet', () => {
  it('is an A4 PDF holding the serial, the clearance value and the verdict words, and the caution', async () => {
    const res = await request(t.app)
      .get(`/sheets/parts/${published.partId}.pdf`)
      .buffer(true)
      .parse((r, cb) => {
        const chunks: Buffer[] = [];
        r.on('data', (c: Buffer) => chunks.push(c));
        r.on('end', () => cb(null, Buffer.concat(chunks)));
      })
      .expect(200);
    expect(res.headers['content-type']).toBe('application/pdf');
    const pdf = new Uint8Array(res.body as Buffer);
    expect(Buffer.from(pdf.subarray(0, 5)).toString()).toBe('%PDF-');

    const doc = await pdfjs.getDocument({ data: pdf.slice(), disableFontFace: true }).promise;
    const [, , w, h] = (await doc.getPage(1)).view;
    // ISO 216 A4 is 210 × 297 mm = 595.28 × 841.89 pt (1 pt = 1/72 in); pdfkit rounds to 595.28 × 841.89.
    expect(w).toBeCloseTo(595.28, 1);
    expect(h).toBeCloseTo(841.89, 1);
    await doc.destroy();

    const { text, images, qrImages } = await pdfText(pdf.slice());
    expect(text).toContain('TP-0417');
    expect(text).toContain(sheet.clearances[0]!.display);
    expect(text).toContain('Within spec');
    // No preferred band and no reject limit on this spec: the band alone, and no second verdict.
    expect(text).toContain('Spec band 0.003–0.005 in');
    expect(text).not.toContain('preferred band');
    expect(text).not.toContain('reject limit');
    expect(text).toContain('Dagny Orlov');
    expect(text).toContain('Pump end float (invented, test), version 1');
    expect(text).toContain('qualified practice');

    // The PDF embeds an image, and that image is a QR code of the verification address.
    expect(images).toBeGreaterThanOrEqual(1);
    const decoded = qrImages.map((img) => jsQR(img.rgba, img.width, img.height)?.data).find(Boolean);
    expect(decoded).toBe(sheet.verifyUrl);
  }, 60_000);

  it('its QR payload, rendered to PNG on its own, decodes to the verification address', async () => {
    const png = PNG.sync.read(await sheetQrPng(sheet.verifyUrl));
    const code = jsQR(new Uint8ClampedArray(png.data), png.width, png.height);
    expect(code?.data).toBe(`${PUBLIC_URL}/verify/parts/${published.partId}?story=${published.story.id}&rev=1`);
  });
});

describe('the limits a sheet states', () => {
  it('gives the band, preferred band and reject limit with one verdict, the readings’ serials and zero offsets, and each instrument’s calibration due date', async () => {
    const res = partSheetSchema.parse((await request(t.app).get(`/api/public/parts/${limited.partId}/sheet`).expect(200)).body);
    expect(res.clearances).toHaveLength(1);
    const c = res.clearances[0]!;
    // 0.5642 in − (0.5595 in − 0.0001 in) = 0.0048 in = 121.92 µm (1 in = 25.4 mm exactly, NIST SP 811 B.8).
    expect(c.valueUm).toBe(121.92);
    expect(c).toMatchObject({ verdict: 'conforms', verdictWords: 'within spec', preferredVerdict: 'does-not-conform', rejectVerdict: 'conforms' });
    // The limits in the spec's unit, at the places that write them all exactly.
    expect(c.limits).toEqual({ band: '0.002–0.006 in', preferred: '0.003–0.004 in', reject: '0.008 in' });
    expect(c.limitFacts).toEqual(['Outside the preferred band 0.003–0.004 in.', 'Clear of the reject limit 0.008 in.']);
    expect(c.band).toEqual({ minUm: 50.8, maxUm: 152.4, preferredMinUm: 76.2, preferredMaxUm: 101.6, rejectUm: 203.2 });

    const height = c.readings.find((r) => r.key === 'rotor-height')!;
    // As judged, after the offset, and as read off the micrometer.
    expect(height).toMatchObject({ instrumentSerial: 'OM-1147-T', figure: '0.5594 in', read: '0.5595 in', zeroOffset: { offset: '0.0001', unit: 'in', text: '+0.0001 in' }, zeroCheckMissing: false });
    const depth = c.readings.find((r) => r.key === 'bore-depth')!;
    // The depth micrometer is zero-checked, but no check was recorded that day: the sheet says so.
    expect(depth).toMatchObject({ instrumentSerial: 'INV-TEST', zeroOffset: null, zeroCheckMissing: true });

    // Calibrated 2026-01-05 with a 3650-day interval: due 3650 days later, 2036-01-03 (2028 and 2032 are leap years).
    expect(res.instruments.map((i) => [i.name, i.serial, i.calibratedOn, i.calibrationDueOn, i.readingDays, i.calibration])).toEqual([
      ['Depth micrometer 0–6 in (test)', 'INV-TEST', '2026-01-05', '2036-01-03', ['2026-11-20'], 'in-date'],
      ['Outside micrometer 0–1 in (test)', 'OM-1147-T', '2026-01-05', '2036-01-03', ['2026-11-20'], 'in-date'],
    ]);

    // The verification page reads the same.
    const verified = verifySheetSchema.parse((await request(t.app).get(`/api/public/verify/parts/${limited.partId}`).query({ story: limited.story.id, rev: 1 }).expect(200)).body);
    expect(verified.entries).toEqual([{ storyId: limited.story.id, title: 'Sheet test: limits: end float', printedRevision: 1, currentRevision: 1, current: true }]);
    expect(verified.sheet!.clearances[0]!.limits).toEqual(c.limits);
    expect(verified.sheet!.clearances[0]!.limitFacts).toEqual(c.limitFacts);
    expect(verified.sheet!.instruments.map((i) => i.calibrationDueOn)).toEqual(['2036-01-03', '2036-01-03']);
  });

  it('prints them on the PDF: band, preferred band, reject limit, serials, calibration due dates and the zero offset taken off', async () => {
    const { text } = await pdfText(await pdfOf(limited.partId));
    expect(text).toContain('Within spec');
    expect(text).toContain('Spec band 0.002–0.006 in · preferred band 0.003–0.004 in · reject limit 0.008 in');
    expect(text).toContain('Outside the preferred band 0.003–0.004 in.');
    expect(text).toContain('Clear of the reject limit 0.008 in.');
    expect(text).toContain('Rotor height: 0.5594 in (read 0.5595 in) — Outside micrometer 0–1 in (test), serial OM-1147-T, 2026-11-20; zero offset +0.0001 in taken off');
    expect(text).toContain('Depth micrometer 0–6 in (test), serial INV-TEST, 2026-11-20; no zero check that day');
    expect(text).toContain('Calibrated 2026-01-05, due 2036-01-03; calibration in date (readings of 2026-11-20).');
    // One verdict per clearance: none of the old chip words for the secondary limits.
    expect(text).not.toMatch(/Too close to call against|Within the preferred band/);
  }, 60_000);
});

describe('verifying a printed sheet', () => {
  const verify = (rev: number) => request(t.app).get(`/api/public/verify/parts/${published.partId}`).query({ story: published.story.id, rev });

  it('says current while the revision printed is the public one, with the figures read now', async () => {
    const res = verifySheetSchema.parse((await verify(1).expect(200)).body);
    expect(res.current).toBe(true);
    expect(res.entries).toEqual([{ storyId: published.story.id, title: 'Sheet test: published: end float', printedRevision: 1, currentRevision: 1, current: true }]);
    expect(res.sheet!.clearances[0]!.valueUm).toBe(119.38);
  });

  it('says not current once a newer revision is published, and shows the new figures', async () => {
    // 0.5642 − 0.5596 = 0.0046 in = 116.84 µm (× 25.4 exactly).
    const lockVersion = await lockVersionOf(owner, published.story.id);
    await owner.agent.patch(`/api/stories/${published.story.id}`).set('x-csrf-token', owner.token).send({ body: fixtureBody({ clearanceWords: 'End float is 0.0046 in, within spec' }), lockVersion }).expect(200);
    await owner.agent.patch(`/api/readings/${published.readings.height.id}`).set('x-csrf-token', owner.token).send({ value: '0.5596', lockVersion: published.readings.height.lockVersion }).expect(200);
    expect(await publishThroughReview(owner, moderator, published)).toBe(2);

    const res = verifySheetSchema.parse((await verify(1).expect(200)).body);
    expect(res.current).toBe(false);
    expect(res.entries).toEqual([{ storyId: published.story.id, title: 'Sheet test: published: end float', printedRevision: 1, currentRevision: 2, current: false }]);
    expect(res.sheet!.clearances[0]!.valueUm).toBe(116.84);
    expect(verifySheetSchema.parse((await verify(2).expect(200)).body).current).toBe(true);
  }, 90_000);

  it('says not current for a withdrawn entry, and refuses a query without a revision per story', async () => {
    const gone = verifySheetSchema.parse((await request(t.app).get(`/api/public/verify/parts/${withdrawn.partId}`).query({ story: withdrawn.story.id, rev: 1 }).expect(200)).body);
    // A withdrawn story's title is not shown any more.
    expect(gone).toMatchObject({ current: false, sheet: null, entries: [{ storyId: withdrawn.story.id, title: null, currentRevision: null, current: false }] });
    const bad = await request(t.app).get(`/api/public/verify/parts/${published.partId}?story=${published.story.id}&story=${withdrawn.story.id}&rev=1`);
    expect(bad.status).toBe(400);
    expect(bad.body.error.details[0].path).toBe('rev');
    expect(bad.body.error.message).toBe(verifyQueryMessages.pairs);
  });

  it('answers a garbled or cut-off address in words for whoever scanned it, not in the schema’s terms', async () => {
    const at = (query: string) => request(t.app).get(`/api/public/verify/parts/${published.partId}?${query}`);
    for (const query of [`story=${published.story.id}&rev=abc`, `story=${published.story.id}&rev=0`, `story=${published.story.id}`]) {
      const res = await at(query).expect(400);
      expect(res.body.error).toMatchObject({ code: 'invalid_request', message: 'This sheet’s revision number is missing or not a number; scan the code again or open the part’s current sheet.' });
      expect(res.body.error.details.map((d: { path: string }) => d.path)).toContain('rev');
    }
    const noStory = await at('rev=1').expect(400);
    expect(noStory.body.error.message).toBe('This sheet’s story number is missing or not a number; scan the code again or open the part’s current sheet.');
  });
});
