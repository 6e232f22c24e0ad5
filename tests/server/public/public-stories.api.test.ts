import fs from 'node:fs';
import http from 'node:http';
import type { AddressInfo } from 'node:net';
import os from 'node:os';
import path from 'node:path';
import zlib from 'node:zlib';
import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it, vi } from 'vitest';
import { evaluateCalc } from '@shared/measure/calc';
import { publicBuildSchema } from '@shared/public/public-build.schema';
import { publicStoryListResponseSchema, publicStorySchema, type PublicStory } from '@shared/public/public-story.schema';
import { STANDING_NOTE } from '@shared/stories/cautions';
import { Clip } from '../../../server/features/clips/clip.model';
import { clipKeys } from '../../../server/features/clips/clips.service';
import { Instrument } from '../../../server/features/instruments/instrument.model';
import { Reading } from '../../../server/features/readings/reading.model';
import { makeTestClip } from '../../support/clips';
import { sessionFor, uploadClip, waitUntilReady, type Session } from '../../support/matrix-fixtures';
import { fixtureBody, lockVersionOf, makeReviewFixture, move, publishThroughReview, type ReviewFixture } from '../../support/review-fixtures';
import { startTestApp, type TestApp } from '../../support/test-app';

let t: TestApp;
let work: string;
let owner: Session;
let otherBuilder: Session;
let moderator: Session;
let anonymous: Session;

/** One story in each state the public side must tell apart. */
const f = {} as Record<'draft' | 'inReview' | 'published' | 'withdrawn' | 'revising', ReviewFixture>;
/** A clip of the published build that no claim cites. */
let uncitedClipId: number;

const send = (s: Session, verb: 'post' | 'patch', url: string, body?: object) => s.agent[verb](url).set('x-csrf-token', s.token).send(body ?? {});

beforeAll(async () => {
  work = fs.mkdtempSync(path.join(os.tmpdir(), 'benchproof-public-'));
  const clipFile = await makeTestClip({ seconds: 2, format: 'mp4-h264', dir: work });
  t = await startTestApp({}, { jobs: true });
  [owner, otherBuilder, moderator, anonymous] = await Promise.all([sessionFor(t, 'owner'), sessionFor(t, 'otherBuilder'), sessionFor(t, 'moderator'), sessionFor(t, 'anonymous')]);

  f.draft = await makeReviewFixture(owner, { clipFile, title: 'Public test: a draft' });
  f.inReview = await makeReviewFixture(owner, { clipFile, title: 'Public test: in review' });
  expect((await move(owner, f.inReview.story.id, 'submit')).status).toBe(200);

  f.published = await makeReviewFixture(owner, { clipFile, title: 'Public test: published' });
  // A reading nobody cited or checked, on the same build: it must not reach the public.
  await send(owner, 'post', `/api/builds/${f.published.buildId}/readings`, {
    momentId: f.published.momentIds[0],
    instrumentId: f.published.instruments.mic,
    key: 'secret-unchecked',
    name: 'Unchecked private reading',
    kind: 'direct',
    value: '0.5000',
    takenOn: '2026-11-20',
  }).expect(201);
  uncitedClipId = await uploadClip(owner, f.published.buildId, clipFile);
  await waitUntilReady(owner, uncitedClipId);
  expect(await publishThroughReview(owner, moderator, f.published)).toBe(1);

  f.withdrawn = await makeReviewFixture(owner, { clipFile, title: 'Public test: withdrawn' });
  await publishThroughReview(owner, moderator, f.withdrawn);
  expect((await move(owner, f.withdrawn.story.id, 'withdraw', { reason: 'a reading needs redoing' })).status).toBe(200);

  f.revising = await makeReviewFixture(owner, { clipFile, title: 'Public test: revision in review' });
  await publishThroughReview(owner, moderator, f.revising);
  await send(owner, 'patch', `/api/stories/${f.revising.story.id}`, { title: 'Second revision, not yet checked', lockVersion: await lockVersionOf(owner, f.revising.story.id) }).expect(200);
  expect((await move(owner, f.revising.story.id, 'submit')).body.state).toBe('in-review');
}, 300_000);

afterAll(async () => {
  await t?.close();
  if (work) fs.rmSync(work, { recursive: true, force: true });
});

const viewers = () => [
  ['anonymous', anonymous],
  ['another builder', otherBuilder],
] as const;

describe('public pages never show drafts, unchecked readings or private media', () => {
  it('a draft, a story in review and a withdrawn one are not found, to anonymous readers and to other builders', async () => {
    for (const [who, s] of viewers()) {
      for (const x of [f.draft, f.inReview, f.withdrawn]) {
        const story = await s.agent.get(`/api/public/stories/${x.story.id}`);
        expect(story.status, `${who}: story ${x.story.title}`).toBe(404);
        expect(story.body.error.code).toBe('not_found');
        expect((await s.agent.get(`/api/public/builds/${x.buildId}`)).status, `${who}: build of ${x.story.title}`).toBe(404);
        for (const media of ['video', 'poster', 'frame?t=0.500']) {
          expect((await s.agent.get(`/api/public/clips/${x.clipId}/${media}`)).status, `${who}: ${media} of ${x.story.title}`).toBe(404);
        }
      }
    }
  }, 60_000);

  // OWASP ASVS 5.0 V2.4 (anti-automation) and V15.2: anonymous requests cannot make the server cut
  // and keep a still for every millisecond of a public clip.
  it('a public clip gives stills only at the moments its publication cites, and cuts nothing for any other time', async () => {
    const clip = (await Clip.findByPk(f.published.clipId))!;
    const framesDir = path.join(t.config.mediaDir, clipKeys(clip).base, 'frames');
    const before = fs.existsSync(framesDir) ? fs.readdirSync(framesDir).length : 0;
    for (const t_ of ['0.250', '0.501', '1.000', '0.001']) {
      const res = await anonymous.agent.get(`/api/public/clips/${f.published.clipId}/frame?t=${t_}`);
      expect(res.status, `t=${t_}`).toBe(404);
      expect(res.body.error.code).toBe('not_found');
    }
    expect(fs.existsSync(framesDir) ? fs.readdirSync(framesDir).length : 0).toBe(before);
    // The cited moment (0.5 s) is there.
    expect((await anonymous.agent.get(`/api/public/clips/${f.published.clipId}/frame?t=0.500`)).status).toBe(200);
  });

  // RFC 9111 §5.2.2.1 (max-age) and RFC 8246 (immutable): an address naming the media's version
  // may be kept by any cache for a year; one without it, or with another version, only briefly.
  it('media at a versioned address may be kept for good; unversioned or mismatched addresses only briefly', async () => {
    const story = await anonymous.agent.get(`/api/public/stories/${f.published.story.id}`).expect(200);
    const moment = (story.body.claims as { readings: { moment: { stillUrl: string; clipUrl: string; posterUrl: string } }[] }[])
      .flatMap((c) => c.readings)
      .map((r) => r.moment)[0]!;
    for (const url of [moment.stillUrl, moment.clipUrl, moment.posterUrl]) {
      const res = await anonymous.agent.get(url).expect(200);
      expect(res.headers['cache-control'], url).toBe('public, max-age=31536000, immutable');
    }
    const unversioned = await anonymous.agent.get(moment.clipUrl.replace(/\?v=.*$/, '')).expect(200);
    expect(unversioned.headers['cache-control']).toBe('public, max-age=60');
    const other = await anonymous.agent.get(moment.posterUrl.replace(/v=[0-9a-f]{12}$/, 'v=000000000000')).expect(200);
    expect(other.headers['cache-control']).toBe('public, max-age=300');
    const malformed = await anonymous.agent.get(moment.posterUrl.replace(/v=[0-9a-f]{12}$/, 'v=nope')).expect(400);
    expect(malformed.body.error.code).toBe('invalid_request');
  });

  it('a published story is shown, with its clip playable in ranges and its evidence stills', async () => {
    for (const [who, s] of viewers()) {
      const story = await s.agent.get(`/api/public/stories/${f.published.story.id}`);
      expect(story.status, who).toBe(200);
      const page = publicStorySchema.parse(story.body);
      expect(page.title).toBe(f.published.story.title);
      expect((await s.agent.get(`/api/public/builds/${f.published.buildId}`)).status).toBe(200);
      const ranged = await s.agent.get(`/api/public/clips/${f.published.clipId}/video`).set('Range', 'bytes=0-99');
      expect(ranged.status).toBe(206);
      expect(ranged.headers['content-range']).toMatch(/^bytes 0-99\/\d+$/);
      const still = await s.agent.get(page.claims[0]!.readings[0]!.moment.stillUrl);
      expect(still.status).toBe(200);
      expect(still.headers['content-type']).toBe('image/jpeg');
      expect((await s.agent.get(`/api/public/clips/${f.published.clipId}/poster`)).status).toBe(200);
    }
  }, 60_000);

  it('a clip of a published build that no claim cites stays private', async () => {
    for (const [, s] of viewers()) {
      for (const media of ['video', 'poster', 'frame?t=0.500']) expect((await s.agent.get(`/api/public/clips/${uncitedClipId}/${media}`)).status).toBe(404);
    }
    // The builder still sees it through the private routes.
    expect((await owner.agent.get(`/api/clips/${uncitedClipId}/poster`)).status).toBe(200);
  });

  it('while a newer revision is in review, the public sees the old revision and its media', async () => {
    for (const [, s] of viewers()) {
      const page = publicStorySchema.parse((await s.agent.get(`/api/public/stories/${f.revising.story.id}`).expect(200)).body);
      expect(page.revision).toBe(1);
      expect(page.title).toBe(f.revising.story.title);
      expect(JSON.stringify(page)).not.toContain('Second revision, not yet checked');
      expect((await s.agent.get(`/api/public/clips/${f.revising.clipId}/video`).set('Range', 'bytes=0-9')).status).toBe(206);
      const build = publicBuildSchema.parse((await s.agent.get(`/api/public/builds/${f.revising.buildId}`).expect(200)).body);
      expect(build.entries.map((e) => [e.title, e.revision])).toEqual([[f.revising.story.title, 1]]);
    }
  });

  it('the lists hold only public revisions, and no reading that was not cited and checked', async () => {
    for (const [, s] of viewers()) {
      const list = publicStoryListResponseSchema.parse((await s.agent.get('/api/public/stories').query({ q: 'Public test', limit: 50 }).expect(200)).body);
      const ids = list.items.map((i) => i.storyId);
      expect(ids).toContain(f.published.story.id);
      expect(ids).toContain(f.revising.story.id);
      for (const hidden of [f.draft, f.inReview, f.withdrawn]) expect(ids).not.toContain(hidden.story.id);
      expect(list.items.find((i) => i.storyId === f.revising.story.id)).toMatchObject({ revision: 1, title: f.revising.story.title });

      const story = await s.agent.get(`/api/public/stories/${f.published.story.id}`).expect(200);
      const build = await s.agent.get(`/api/public/builds/${f.published.buildId}`).expect(200);
      for (const body of [JSON.stringify(story.body), JSON.stringify(build.body), JSON.stringify(list)]) {
        expect(body).not.toContain('secret-unchecked');
        // Only public addresses: no private media route leaks into a public page.
        expect(body).not.toMatch(/"\/api\/clips\//);
      }
      for (const claim of publicStorySchema.parse(story.body).claims) {
        for (const r of claim.readings) expect(r.checked.byName).toBe('Dagny Orlov');
        if (claim.clearance) expect(claim.clearance.checked.byName).toBe('Dagny Orlov');
      }
    }
  });
});

describe('the published story page', () => {
  let page: PublicStory;
  beforeAll(async () => {
    page = publicStorySchema.parse((await anonymous.agent.get(`/api/public/stories/${f.published.story.id}`).expect(200)).body);
  });

  it('shows the claim evidence with the engine’s figures, recomputed from the stored readings', async () => {
    const rows = await Reading.findAll({ where: { id: [f.published.readings.depth.id, f.published.readings.height.id] } });
    const instruments = new Map((await Instrument.findAll({ where: { id: rows.map((r) => r.instrumentId) } })).map((i) => [i.id, i]));
    const engineOf = (r: Reading) => ({ kind: 'direct' as const, value: Number(r.value), unit: r.unit, resolution: Number(instruments.get(r.instrumentId)!.resolution) });
    const depth = rows.find((r) => r.key === 'bore-depth')!;
    const height = rows.find((r) => r.key === 'rotor-height')!;
    const engine = evaluateCalc({
      readings: { 'bore-depth': engineOf(depth), 'rotor-height': engineOf(height) },
      terms: [
        { reading: 'bore-depth', sign: 1 },
        { reading: 'rotor-height', sign: -1 },
      ],
      spec: { unit: 'in', min: 0.003, max: 0.005, rule: 'guarded' },
    });

    const claim = page.claims.find((c) => c.kind === 'clearance')!;
    const c = claim.clearance!;
    // 0.5642 in − 0.5595 in = 0.0047 in = 119.38 µm exactly (1 in = 25.4 mm, exact by definition).
    expect(c.valueUm).toBe(119.38);
    expect(c.valueUm).toBe(Number(engine.valuePm) / 1e6);
    // u = 2.54 µm/(2√3) per reading (GUM F.2.2.1), combined in quadrature (GUM eq. 10).
    expect(c.standardUncertaintyUm).toBeCloseTo((Math.SQRT2 * 2.54) / (2 * Math.sqrt(3)), 9);
    // Two equal rectangulars: triangular, 95 % half-width 2.54(1 − √0.05) µm ≈ 1.972 µm (JCGM 101:2008 6.4.2), by Monte Carlo.
    expect(c.expandedUncertaintyUm).toBeCloseTo(2.54 * (1 - Math.sqrt(0.05)), 1);
    expect(c.method).toBe('monte-carlo');
    expect(c.budget?.length).toBe(2);
    // Both are Monte Carlo intervals of the same model (seeded by their own requests): equal within the tolerance.
    expect(c.expandedUncertaintyUm).toBeCloseTo(engine.expandedUncertaintyUm!, 1);
    expect(c.standardUncertaintyUm).toBe(engine.standardUncertaintyUm);
    // 0.0047 lies at least U inside 0.003–0.005 in (ISO 14253-1 guarded acceptance, ILAC-G8:09/2019).
    expect(c.verdict).toBe('conforms');
    expect(c.verdict).toBe(engine.judgement!.verdict);
    expect(c.rule).toBe('guarded');
    expect(c.band).toMatchObject({ minUm: 76.2, maxUm: 127 }); // 0.003 in and 0.005 in × 25.4 mm/in
    expect(c.spec).toEqual({ name: 'Pump end float (invented, test)', version: 1, sourceKind: 'manual', sourceText: 'Invented workshop manual, section 3 (test figures)' });
    expect(c.steps.join('\n')).toContain('0.5642 in − 0.5595 in = 0.0047 in');
    expect(claim.readings.map((r) => [r.key, r.valueUm])).toEqual([
      ['bore-depth', Number(engine.readings.get('bore-depth')!.valuePm) / 1e6],
      ['rotor-height', Number(engine.readings.get('rotor-height')!.valuePm) / 1e6],
    ]);
    expect(claim.readings[0]!.valueUm).toBe(14330.68); // 0.5642 × 25 400 µm
  });

  it('shows each reading as entered, with its instrument, calibration, who checked it and where in the clip', () => {
    const claim = page.claims.find((c) => c.kind === 'reading')!;
    expect(claim.key).toBe('bore-depth');
    const r = claim.readings[0]!;
    expect(r.entered).toEqual({ value: '0.5642' });
    expect(r.instrument).toMatchObject({ name: 'Depth micrometer 0–6 in (test)', calibration: 'in-date' });
    // The media addresses carry the version of the clip's media (12 hex digits), the same on each.
    const v = /[?&]v=([0-9a-f]{12})$/.exec(r.moment.clipUrl)?.[1];
    expect(v, r.moment.clipUrl).toBeDefined();
    expect(r.moment).toMatchObject({
      clipId: f.published.clipId,
      atMs: 500,
      stillUrl: `/api/public/clips/${f.published.clipId}/frame?t=0.500&v=${v}`,
      clipUrl: `/api/public/clips/${f.published.clipId}/video?v=${v}`,
      posterUrl: `/api/public/clips/${f.published.clipId}/poster?v=${v}`,
    });
    expect(r.checked).toMatchObject({ byName: 'Dagny Orlov', lockVersion: f.published.readings.depth.lockVersion });
    expect(r.warnings.map((w) => w.code)).toContain('no-zero-check');
  });

  it('renders the body from the publication, with the claims, the caution and the standing note', () => {
    expect(page.html).toContain('class="claim"');
    expect(page.html).toContain('href="#claim-clearance-end-float"');
    expect(page.claims.map((c) => c.anchor)).toEqual(['claim-reading-bore-depth', 'claim-clearance-end-float']);
    expect(page.claims.every((c) => c.state === 'ok')).toBe(true);
    expect(page.html).toContain('data-caution="solvents"');
    expect(page.standingNote).toBe(STANDING_NOTE);
    expect(page.publisher.displayName).toBe('Dagny Orlov');
    expect(page.builder).toMatchObject({ login: 'demo-builder', displayName: 'Ines Calloway' });
    expect(page.build.parts).toEqual([{ id: f.published.partId, name: 'Oil pump (invented)', serial: 'TP-0417', sheetUrl: `/api/public/parts/${f.published.partId}/sheet`, pdfUrl: `/sheets/parts/${f.published.partId}.pdf` }]);
  });

  it('gives the figures in the reader’s other system when asked', async () => {
    const metric = publicStorySchema.parse((await anonymous.agent.get(`/api/public/stories/${f.published.story.id}`).query({ units: 'metric' }).expect(200)).body);
    const c = metric.claims.find((x) => x.kind === 'clearance')!.clearance!;
    // 119.38 µm = 0.11938 mm, given at the place of U ≈ 1.97 µm to two significant digits (GUM 7.2.6);
    // k = U/u_c = 1.972/1.037 ≈ 1.90 for the triangular distribution of two equal resolutions.
    expect(c.converted).toBe('0.1194 mm ± 0.0020 mm (k = 1.90)');
    expect(metric.units).toBe('metric');
    expect(page.claims.find((x) => x.kind === 'clearance')!.clearance!.converted).toBeNull();
    const imperial = publicStorySchema.parse((await anonymous.agent.get(`/api/public/stories/${f.published.story.id}`).query({ units: 'imperial' }).expect(200)).body);
    expect(imperial.claims.find((x) => x.kind === 'clearance')!.clearance!.converted).toBeNull();
  });
});

describe('caching of a published story', () => {
  it('answers with an ETag naming the publication, and 304 to a matching If-None-Match', async () => {
    const first = await anonymous.agent.get(`/api/public/stories/${f.published.story.id}`).set('Accept-Encoding', 'identity').expect(200);
    const etag = first.headers.etag!;
    expect(etag).toMatch(new RegExp(`^"p${first.body.publicationId}\\.[0-9a-z]+-entered"$`));
    expect(first.headers['content-encoding']).toBeUndefined();
    expect(first.headers['cache-control']).toBe('public, max-age=60, stale-while-revalidate=300');
    expect(first.headers['set-cookie']).toBeUndefined();
    const again = await request(t.app).get(`/api/public/stories/${f.published.story.id}`).set('Accept-Encoding', 'identity').set('If-None-Match', etag);
    expect(again.status).toBe(304);
    expect(again.text ?? '').toBe('');
    const metric = await request(t.app).get(`/api/public/stories/${f.published.story.id}`).set('Accept-Encoding', 'identity').query({ units: 'metric' }).set('If-None-Match', etag);
    expect(metric.status).toBe(200);
    expect(metric.headers.etag).toBe(etag.replace('-entered"', '-metric"'));
  });

  it('sends the page gzipped to a reader that accepts gzip, as its own representation (RFC 9110 §8.4, §8.8.3)', async () => {
    const url = `/api/public/stories/${f.published.story.id}`;
    const plain = await request(t.app).get(url).set('Accept-Encoding', 'identity').expect(200);
    // The bytes as sent: plain node:http, which (unlike superagent) does not decompress.
    const raw = await rawGet(t.app, url, { 'accept-encoding': 'gzip, deflate, br' });
    expect(raw.status).toBe(200);
    expect(raw.headers['content-encoding']).toBe('gzip');
    expect(raw.headers.vary).toMatch(/Accept-Encoding/i);
    expect(raw.headers.etag).toBe(String(plain.headers.etag).replace(/"$/, '-gzip"'));
    expect(raw.body.length).toBeLessThan(Buffer.byteLength(plain.text));
    expect(zlib.gunzipSync(raw.body).toString('utf8')).toBe(plain.text);
    // Each representation is revalidated by its own tag only.
    const same = await request(t.app).get(url).set('Accept-Encoding', 'gzip').set('If-None-Match', String(raw.headers.etag));
    expect(same.status).toBe(304);
    const other = await request(t.app).get(url).set('Accept-Encoding', 'identity').set('If-None-Match', String(raw.headers.etag));
    expect(other.status).toBe(200);
    // A coding the reader refuses is never sent.
    const refused = await request(t.app).get(url).set('Accept-Encoding', 'gzip;q=0').expect(200);
    expect(refused.headers['content-encoding']).toBeUndefined();
  });

  it('serves a story it has built before with a single query: the lookup of its current publication', async () => {
    await request(t.app).get(`/api/public/stories/${f.published.story.id}`).expect(200);
    const spy = vi.spyOn(t.sequelize, 'query');
    try {
      await request(t.app).get(`/api/public/stories/${f.published.story.id}`).expect(200);
      expect(spy).toHaveBeenCalledTimes(1);
    } finally {
      spy.mockRestore();
    }
  });

  it('a renamed build reaches readers at once, under a new ETag, without a new publication', async () => {
    const url = `/api/public/stories/${f.published.story.id}`;
    const before = await request(t.app).get(url).set('Accept-Encoding', 'identity').expect(200);
    const title = `${before.body.build.title} (renamed for the cache test)`;
    await send(owner, 'patch', `/api/builds/${f.published.buildId}`, { title }).expect(200);
    const after = await request(t.app).get(url).set('Accept-Encoding', 'identity').set('If-None-Match', before.headers.etag!);
    expect(after.status).toBe(200);
    expect(after.headers.etag).not.toBe(before.headers.etag);
    expect(after.body.build.title).toBe(title);
    expect(after.body.revision).toBe(before.body.revision);
    expect(after.body.publicationId).toBe(before.body.publicationId);
    // The new tag is stable until the next change.
    const again = await request(t.app).get(url).set('Accept-Encoding', 'identity').set('If-None-Match', after.headers.etag!);
    expect(again.status).toBe(304);
  });

  it('a new publication changes the ETag, and the old tag no longer matches', async () => {
    const x = await makeReviewFixture(owner, { clipFile: await makeTestClip({ seconds: 2, format: 'mp4-h264', dir: work, name: 'etag' }), title: 'Public test: republished' });
    await publishThroughReview(owner, moderator, x);
    const before = await anonymous.agent.get(`/api/public/stories/${x.story.id}`).expect(200);
    await send(owner, 'patch', `/api/stories/${x.story.id}`, { body: fixtureBody({ extra: 'Checked again after a night on the plate.' }), lockVersion: await lockVersionOf(owner, x.story.id) }).expect(200);
    expect(await publishThroughReview(owner, moderator, x)).toBe(2);
    const after = await request(t.app).get(`/api/public/stories/${x.story.id}`).set('If-None-Match', before.headers.etag!);
    expect(after.status).toBe(200);
    expect(after.headers.etag).not.toBe(before.headers.etag);
    expect(after.body.revision).toBe(2);
    expect(after.body.html).toContain('Checked again after a night on the plate.');
  }, 120_000);

  it('the public list may be kept by a shared cache, answers 304 to its own ETag, and changes with a new publication', async () => {
    const first = await request(t.app).get('/api/public/stories?limit=50').expect(200);
    // RFC 9111 §5.2.2: s-maxage for shared caches; RFC 5861: stale-while-revalidate.
    expect(first.headers['cache-control']).toBe('public, max-age=30, s-maxage=60, stale-while-revalidate=300');
    const etag = first.headers.etag!;
    expect(etag).toBeTruthy();
    await request(t.app).get('/api/public/stories?limit=50').set('If-None-Match', etag).expect(304);
    const x = await makeReviewFixture(owner, { clipFile: await makeTestClip({ seconds: 2, format: 'mp4-h264', dir: work, name: 'list-etag' }), title: 'Public test: new on the list' });
    await publishThroughReview(owner, moderator, x);
    const after = await request(t.app).get('/api/public/stories?limit=50').set('If-None-Match', etag);
    expect(after.status).toBe(200);
    expect(after.headers.etag).not.toBe(etag);
    expect(publicStoryListResponseSchema.parse(after.body).items.map((i) => i.storyId)).toContain(x.story.id);
  }, 120_000);
});

describe('the public story list', () => {
  it('pages newest first by a cursor, without repeating or skipping a story', async () => {
    const all = publicStoryListResponseSchema.parse((await anonymous.agent.get('/api/public/stories').query({ limit: 50 }).expect(200)).body).items;
    expect(all.length).toBeGreaterThanOrEqual(3);
    const times = all.map((i) => Date.parse(i.publishedAt));
    expect([...times].sort((a, b) => b - a)).toEqual(times);
    const seen: number[] = [];
    let before: string | null | undefined;
    do {
      const res = publicStoryListResponseSchema.parse((await anonymous.agent.get('/api/public/stories').query({ limit: 1, ...(before && { before }) }).expect(200)).body);
      seen.push(...res.items.map((i) => i.storyId));
      before = res.nextBefore;
    } while (before);
    expect(seen).toEqual(all.map((i) => i.storyId));
  });

  it('filters by tag, builder, out-of-spec verdict and words, taking % and _ literally', async () => {
    const q = (query: Record<string, string>) => anonymous.agent.get('/api/public/stories').query({ limit: 50, ...query });
    expect((await q({ builder: 'demo-builder-2' }).expect(200)).body.items.some((i: { storyId: number }) => i.storyId === f.published.story.id)).toBe(false);
    expect((await q({ builder: 'demo-builder' }).expect(200)).body.items.some((i: { storyId: number }) => i.storyId === f.published.story.id)).toBe(true);
    // The fixture's end float conforms, so no story of this file is out of spec.
    const oos = (await q({ verdict: 'out-of-spec' }).expect(200)).body.items as { storyId: number; outOfSpec: boolean }[];
    expect(oos.every((i) => i.outOfSpec)).toBe(true);
    expect(oos.some((i) => i.storyId === f.published.story.id)).toBe(false);
    expect((await q({ q: 'Public test: published' }).expect(200)).body.items.map((i: { storyId: number }) => i.storyId)).toEqual([f.published.story.id]);
    // As a wildcard, % would match "Public test: published"; here it is a character no title has.
    expect((await q({ q: 'P%d' }).expect(200)).body.items).toEqual([]);
    expect((await q({ tag: 'no-such-tag-anywhere' }).expect(200)).body.items).toEqual([]);
    const bad = await q({ verdict: 'sometimes' });
    expect(bad.status).toBe(400);
    expect(bad.body.error.details[0].path).toBe('verdict');
  });

  it('the list of followed builders’ stories needs a signed-in reader', async () => {
    const res = await anonymous.agent.get('/api/public/stories/following');
    expect(res.status).toBe(401);
    expect(res.body.error.code).toBe('unauthorized');
  });
});

describe('the public build page', () => {
  it('lists the public entries and a summary of every checked clearance across them', async () => {
    const build = publicBuildSchema.parse((await anonymous.agent.get(`/api/public/builds/${f.published.buildId}`).expect(200)).body);
    expect(build.entries.map((e) => e.storyId)).toEqual([f.published.story.id]);
    expect(build.parts).toEqual([expect.objectContaining({ serial: 'TP-0417', sheetUrl: `/api/public/parts/${f.published.partId}/sheet` })]);
    expect(build.clearances).toHaveLength(1);
    const summary = build.clearances[0]!;
    expect(summary).toMatchObject({ key: 'end-float', name: 'End float', unit: 'in' });
    // 0.0047 in = 119.38 µm (exact); the engine's verdict as published.
    expect(summary.first).toMatchObject({ storyId: f.published.story.id, revision: 1, valueUm: 119.38, verdict: 'conforms', rule: 'guarded' });
    expect(summary.latest).toEqual(summary.first);
  });

  it('answers 404 for a build that does not exist', async () => {
    expect((await anonymous.agent.get('/api/public/builds/999999999')).status).toBe(404);
  });
});

describe('the builder profile', () => {
  it('shows a builder’s published builds and follower count, and whether the caller follows', async () => {
    const anon = await anonymous.agent.get('/api/public/builders/demo-builder').expect(200);
    expect(anon.body).toMatchObject({ login: 'demo-builder', displayName: 'Ines Calloway', following: null, feedUrl: '/feeds/builders/demo-builder.atom' });
    expect(anon.body.builds.some((b: { id: number; entryCount: number }) => b.id === f.published.buildId && b.entryCount === 1)).toBe(true);
    expect(anon.body.builds.some((b: { id: number }) => b.id === f.draft.buildId)).toBe(false);
    const other = await otherBuilder.agent.get('/api/public/builders/demo-builder').expect(200);
    expect(typeof other.body.following).toBe('boolean');
  });

  it('answers 404 for unknown logins and for accounts that do not build', async () => {
    expect((await anonymous.agent.get('/api/public/builders/no-such-login-here')).status).toBe(404);
    expect((await anonymous.agent.get('/api/public/builders/demo-follower')).status).toBe(404);
  });
});

/** One GET through a real socket, returning the body bytes exactly as the server sent them. */
async function rawGet(app: http.RequestListener, pathname: string, headers: Record<string, string>) {
  const server = http.createServer(app);
  await new Promise<void>((r) => server.listen(0, '127.0.0.1', r));
  try {
    const { port } = server.address() as AddressInfo;
    return await new Promise<{ status: number; headers: http.IncomingHttpHeaders; body: Buffer }>((resolve, reject) => {
      http
        .get({ host: '127.0.0.1', port, path: pathname, headers }, (res) => {
          const chunks: Buffer[] = [];
          res.on('data', (c: Buffer) => chunks.push(c));
          res.on('end', () => resolve({ status: res.statusCode ?? 0, headers: res.headers, body: Buffer.concat(chunks) }));
        })
        .on('error', reject);
    });
  } finally {
    server.closeAllConnections();
    await new Promise<void>((r) => server.close(() => r()));
  }
}
