// `npm run bench:page`: a reader's cold first load of a published story page, as `npm start`
// serves it (the built client + API from one Express app), on this machine. Five runs, each in a
// fresh browser context (empty cache, no cookies): Largest Contentful Paint, and the JavaScript and
// CSS fetched before it. Prints figures, asserts nothing.
// Goals: LCP < 1 s on localhost; JavaScript before LCP < 150 KB gzip.
// Uses its own throwaway cluster (.data/postgres-bench-page), never the demo or test data.
import crypto from 'node:crypto';
import fs from 'node:fs';
import http from 'node:http';
import type { AddressInfo } from 'node:net';
import os from 'node:os';
import path from 'node:path';
import zlib from 'node:zlib';
import { clipSchema } from '../shared/clips/clip.schema';
import { createApp } from '../server/app';
import { loadConfig } from '../server/config';
import { createSequelize } from '../server/db/sequelize';
import { initModels } from '../server/db/models';
import { createLogger } from '../server/logger';
import { createFakeGithub } from '../server/fakes/github/fake-github';
import { startClipWorker } from '../server/features/clips/clip.job';
import { startQueue } from '../server/jobs/queue';
import { localStorage } from '../server/storage/local-storage';
import { makeTestClip } from '../tests/support/clips';
import { benchSession, type BenchSession } from './lib/bench-env';
import { prepareDatabase, repoRoot } from './lib/bootstrap';
import { launchBrowser } from './lib/chromium';
import { buildClientIfChanged } from './lib/client-build';
import { fakeAccounts } from './lib/run-local';

const RUNS = Number(process.env.BENCH_RUNS ?? 5);
// BENCHPROOF_CLIENT_OUT measures a build in its own folder (as the browser tests allow).
const clientDir = process.env.BENCHPROOF_CLIENT_OUT ? path.resolve(process.env.BENCHPROOF_CLIENT_OUT) : path.join(repoRoot, 'dist/client');

const gzipCache = new Map<string, { raw: number; gzip: number }>();

type Session = BenchSession;

const db = await prepareDatabase({
  dataDir: path.join(repoRoot, '.data/postgres-bench-page'),
  port: Number(process.env.BENCH_PG_PORT ?? 54362),
  database: 'benchproof_bench_page',
  seed: true,
  fresh: true,
  throwaway: true,
});
const work = fs.mkdtempSync(path.join(os.tmpdir(), 'benchproof-bench-page-'));
const mediaDir = path.join(work, 'media');
fs.mkdirSync(mediaDir);
const stops: (() => Promise<unknown> | unknown)[] = [];

try {
  const rebuilt = await buildClientIfChanged(clientDir);
  console.log(`[client] ${rebuilt ? 'built' : 'up to date'} in ${clientDir}`);

  // The page server first, so its address can be the app's public URL (share tags, sign-in return).
  const server = http.createServer();
  await new Promise<void>((r) => server.listen(0, '127.0.0.1', r));
  const url = `http://127.0.0.1:${(server.address() as AddressInfo).port}`;
  stops.push(() => new Promise<void>((r) => {
    server.closeAllConnections();
    server.close(() => r());
  }));

  const fake = createFakeGithub({ clientId: 'benchproof-local', clientSecret: 'benchproof-local-secret', accounts: fakeAccounts(), port: 0 });
  const fakeUrl = await fake.listen();
  stops.push(() => fake.close());

  const config = loadConfig({
    NODE_ENV: 'test',
    DATABASE_URL: db.databaseUrl,
    MEDIA_DIR: mediaDir,
    CLIENT_DIR: clientDir,
    PUBLIC_URL: url,
    FAKE_GITHUB_URL: fakeUrl,
    LOG_LEVEL: 'silent',
    SIGN_IN_RATE_LIMIT: '1000',
    JOB_QUEUE_PREFIX: `bench${process.pid}`,
    SESSION_SECRET: crypto.randomBytes(24).toString('hex'),
  });
  const sequelize = createSequelize(config.databaseUrl);
  initModels(sequelize);
  stops.push(() => sequelize.close());
  const logger = createLogger(config);
  const storage = localStorage(mediaDir);
  const queue = await startQueue(config);
  stops.push(() => queue.boss.stop({ graceful: false, wait: true }));
  const worker = await startClipWorker(config, queue, { storage, logger });
  stops.push(() => worker.stop());
  const built = createApp({ config, sequelize, logger, storage, queue });
  stops.push(() => built.close());
  server.on('request', built.app);

  const storyId = await publishStory(built.app, work);
  const storyUrl = `${url}/stories/${storyId}`;
  console.log(`Published story ${storyId} with a cover still and five claims: ${storyUrl}`);

  const compressed = await fetch(`${url}/`, { headers: { 'accept-encoding': 'gzip, br' } });
  const encoding = compressed.headers.get('content-encoding');
  await compressed.arrayBuffer();
  console.log(`Server compression: ${encoding ? `yes (${encoding}); "wire" below is what the browser received` : 'none (raw bytes on the wire)'}; gzip sizes are computed from the files on disk, zlib level 6`);
  console.log(`Machine: ${os.cpus().length} cores (${os.cpus()[0]?.model ?? 'unknown'}), Node ${process.version}; ${RUNS} cold loads, each in a fresh browser context`);

  const rows: Run[] = [];
  for (let i = 0; i < RUNS; i += 1) rows.push(await coldLoad(storyUrl));
  const kb = (n: number) => `${(n / 1024).toFixed(1)} KB`;
  for (const [i, r] of rows.entries()) {
    console.log(
      `run ${i + 1}: LCP ${r.lcp.toFixed(0)} ms (${r.lcpElement}); before LCP: JS ${r.js.count} files ${kb(r.js.raw)} raw / ${kb(r.js.gzip)} gzip / ${kb(r.js.wire)} wire, CSS ${r.css.count} files ${kb(r.css.raw)} raw / ${kb(r.css.gzip)} gzip / ${kb(r.css.wire)} wire; load event ${r.load.toFixed(0)} ms`,
    );
    console.log(`       ms: ${r.timeline}`);
  }
  const sorted = rows.map((r) => r.lcp).sort((a, b) => a - b);
  const median = sorted[Math.floor(sorted.length / 2)]!;
  const js = rows[rows.length - 1]!.js;
  console.log(`LCP median ${median.toFixed(0)} ms, worst ${sorted[sorted.length - 1]!.toFixed(0)} ms (goal < 1000 ms); JS before LCP ${kb(js.gzip)} gzip (goal < 150 KB).`);
  console.log('JS files before LCP (last run):');
  for (const f of js.files) console.log(`  ${f.name.padEnd(48)} ${kb(f.raw).padStart(9)} raw ${kb(f.gzip).padStart(9)} gzip ${kb(f.wire).padStart(9)} wire`);
} finally {
  for (const stop of stops.reverse()) {
    try {
      await stop();
    } catch (err) {
      console.error(err);
    }
  }
  db.postgres?.stop();
  fs.rmSync(work, { recursive: true, force: true });
}

interface Files {
  count: number;
  raw: number;
  gzip: number;
  /** Body bytes as they came over the wire (compressed when the server compresses). */
  wire: number;
  files: { name: string; raw: number; gzip: number; wire: number }[];
}
interface Run {
  lcp: number;
  lcpElement: string;
  load: number;
  timeline: string;
  js: Files;
  css: Files;
}

/** A built asset's size on disk and gzipped (zlib level 6, as the server's compression sends it). */
function sizesOf(pathname: string): { raw: number; gzip: number } {
  const file = path.join(clientDir, decodeURIComponent(pathname));
  if (!gzipCache.has(file)) {
    const bytes = fs.existsSync(file) ? fs.readFileSync(file) : Buffer.alloc(0);
    gzipCache.set(file, { raw: bytes.length, gzip: bytes.length ? zlib.gzipSync(bytes, { level: 6 }).length : 0 });
  }
  return gzipCache.get(file)!;
}

/** One load in a browser with a new profile: empty HTTP cache, no cookies, no service worker. */
async function coldLoad(storyUrl: string): Promise<Run> {
  const context = await launchBrowser();
  try {
    const page = await context.newPage();
    // Registered before any of the page's scripts, buffered, so the first candidates are not missed.
    await page.addInitScript(() => {
      const w = window as unknown as { __lcp: { t: number; el: string }[] };
      w.__lcp = [];
      new PerformanceObserver((list) => {
        for (const e of list.getEntries() as (PerformanceEntry & { element?: Element | null; url?: string })[]) {
          const el = e.element;
          w.__lcp.push({ t: e.startTime, el: el ? `${el.tagName.toLowerCase()}${e.url ? ' ' + new URL(e.url).pathname : ''}` : '(removed)' });
        }
      }).observe({ type: 'largest-contentful-paint', buffered: true });
    });
    await page.goto(storyUrl, { waitUntil: 'load' });
    await page.locator('h1').first().waitFor();
    // LCP is final once the page has settled; let late candidates (the cover still) arrive.
    await page.waitForLoadState('networkidle');
    await page.waitForTimeout(300);
    const measured = await page.evaluate(() => {
      const w = window as unknown as { __lcp: { t: number; el: string }[] };
      const nav = performance.getEntriesByType('navigation')[0] as PerformanceNavigationTiming | undefined;
      const resources = (performance.getEntriesByType('resource') as PerformanceResourceTiming[]).map((r) => ({
        name: new URL(r.name).pathname,
        start: r.startTime,
        end: r.responseEnd,
        encoded: r.encodedBodySize,
        transfer: r.transferSize,
      }));
      return { lcp: w.__lcp, load: nav?.loadEventEnd ?? 0, html: nav?.responseEnd ?? 0, resources };
    });
    const last = measured.lcp[measured.lcp.length - 1];
    if (!last) throw new Error('the page reported no largest-contentful-paint entry');
    const pick = (ext: string): Files => {
      const files = measured.resources
        .filter((r) => r.name.endsWith(ext) && r.end <= last.t)
        .map((r) => ({ name: path.basename(r.name), ...sizesOf(r.name), wire: r.encoded }));
      const sum = (key: 'raw' | 'gzip' | 'wire') => files.reduce((s, f) => s + f[key], 0);
      return { count: files.length, raw: sum('raw'), gzip: sum('gzip'), wire: sum('wire'), files };
    };
    // Where the time before LCP goes: the chain is page → entry → route chunk → story data → cover still.
    const at = (test: (name: string) => boolean) => measured.resources.find((r) => test(r.name));
    const span = (r: { start: number; end: number } | undefined) => (r ? `${r.start.toFixed(0)}–${r.end.toFixed(0)}` : 'none');
    const timeline = [
      `html –${measured.html.toFixed(0)}`,
      `entry JS ${span(at((n) => /\/assets\/index-[^/]+\.js$/.test(n)))}`,
      `story chunk ${span(at((n) => /\/assets\/story-page-[^/]+\.js$/.test(n)))}`,
      `story API ${span(at((n) => n.startsWith('/api/public/stories/')))}`,
      `cover still ${span(at((n) => n.includes('/frame')))}`,
    ].join(', ');
    return { lcp: last.t, lcpElement: last.el, load: measured.load, timeline, js: pick('.js'), css: pick('.css') };
  } finally {
    await context.dispose();
  }
}

/**
 * A published story made through the API the way a builder and a moderator would: a build, a
 * real processed clip (the cover still is a frame of it), readings, a spec, clearances, then
 * submit, claim, check everything, publish. All names and figures are invented.
 */
async function publishStory(app: http.RequestListener, dir: string): Promise<number> {
  const owner = await benchSession(app, 'demo-builder');
  const moderator = await benchSession(app, 'demo-moderator');
  const send = (s: Session, verb: 'post' | 'patch', url: string, body: object = {}) => s.agent[verb](url).set('x-csrf-token', s.token).send(body);
  const ok = async <T>(what: string, res: { status: number; body: unknown }, pick: (b: never) => T): Promise<T> => {
    if (res.status !== 200 && res.status !== 201) throw new Error(`${what} answered ${res.status}: ${JSON.stringify(res.body)}`);
    return pick(res.body as never);
  };

  const build = await ok('build', await send(owner, 'post', '/api/builds', { title: 'Invented flat-twin oil pump (page benchmark)', subject: 'an invented engine, for the benchmark', parts: [{ name: 'Oil pump (invented)', serial: 'BP-0001' }] }), (b: { build: { id: number; parts: { id: number }[] } }) => b.build);
  const clipFile = await makeTestClip({ format: 'mp4-h264', dir, seconds: 5, width: 640, height: 360, name: 'bench-page' });
  const upload = await owner.agent.post(`/api/builds/${build.id}/clips`).set('x-csrf-token', owner.token).attach('file', clipFile, 'bench-page.mp4');
  const clipId = await ok('clip upload', upload, (b: { clip: unknown }) => clipSchema.parse(b.clip).id);
  for (const end = Date.now() + 120_000; ; ) {
    const clip = clipSchema.parse((await owner.agent.get(`/api/clips/${clipId}`)).body.clip);
    if (clip.status === 'ready') break;
    if (clip.status === 'failed' || Date.now() > end) throw new Error(`the clip did not become ready (${clip.status})`);
    await new Promise((r) => setTimeout(r, 200));
  }
  const moment = async (atMs: number, label: string) => ok('moment', await send(owner, 'post', `/api/clips/${clipId}/moments`, { atMs, label }), (b: { moment: { id: number } }) => b.moment.id);
  const moments = [await moment(500, 'Depth micrometer on the pump body'), await moment(1500, 'Rotor under the micrometer'), await moment(3000, 'After facing')];

  const calibrated = { unit: 'in', resolution: '0.0001', lastCalibratedOn: '2026-01-05', calibrationIntervalDays: 3650 };
  const instrument = async (name: string, kind: string) => ok('instrument', await send(owner, 'post', '/api/instruments', { ...calibrated, name, kind, serial: 'INV-BENCH' }), (b: { instrument: { id: number } }) => b.instrument.id);
  const depthMic = await instrument('Depth micrometer 0–6 in (benchmark)', 'depth-micrometer');
  const outsideMic = await instrument('Outside micrometer 0–1 in (benchmark)', 'outside-micrometer');
  const reading = async (key: string, name: string, momentId: number, instrumentId: number, value: string) =>
    ok('reading', await send(owner, 'post', `/api/builds/${build.id}/readings`, { key, name, momentId, instrumentId, value, kind: 'direct', takenOn: '2026-11-20', partId: build.parts[0]!.id }), (b: { reading: { id: number } }) => b.reading.id);
  const depth = await reading('bore-depth', 'Bore depth', moments[0]!, depthMic, '0.5642');
  const height = await reading('rotor-height', 'Rotor height', moments[1]!, outsideMic, '0.5595');
  const after = await reading('bore-depth-after', 'Bore depth after facing', moments[2]!, depthMic, '0.5633');
  const spec = await ok(
    'spec',
    await send(owner, 'post', '/api/specs', { name: 'Pump end float (invented, benchmark)', appliesTo: 'Invented flat-twin rotor oil pump', unit: 'in', min: '0.003', max: '0.005', rule: 'guarded', source: { kind: 'manual', text: 'Invented workshop manual, section 3 (benchmark figures)' } }),
    (b: { spec: { latest: { id: number } } }) => b.spec.latest.id,
  );
  const clearance = async (key: string, name: string, plus: number) =>
    ok('clearance', await send(owner, 'post', `/api/builds/${build.id}/clearances`, { key, name, template: 'end-float', terms: [{ readingId: plus, sign: 1 }, { readingId: height, sign: -1 }], specVersionId: spec }), (b: { clearance: { id: number } }) => b.clearance.id);
  const before = await clearance('end-float', 'End float', depth);
  const faced = await clearance('end-float-after', 'End float after facing', after);

  const body = [
    'The pump body went onto the surface plate, cleaned and dry, before anything was measured.',
    '',
    '[The bore depth read 0.5642 in](reading:bore-depth) with the depth micrometer, and [the rotor height read 0.5595 in](reading:rotor-height).',
    '',
    '[End float is 0.0047 in, within spec](clearance:end-float) by the guarded rule.',
    '',
    'The body was then faced: [the bore depth read 0.5633 in](reading:bore-depth-after), so [end float after facing is 0.0038 in](clearance:end-float-after), still within spec.',
    '',
    ':::caution solvents',
    'The parts were washed in solvent first.',
    ':::',
    '',
  ].join('\n');
  const story = await ok('story', await send(owner, 'post', `/api/builds/${build.id}/stories`, { title: 'Invented flat-twin oil pump: end float', summary: 'End float of the invented pump, before and after facing.', body }), (b: { story: { id: number } }) => b.story.id);
  const lock = async () => ((await owner.agent.get(`/api/stories/${story}`)).body as { story: { lockVersion: number } }).story.lockVersion;
  await ok('cover', await send(owner, 'patch', `/api/stories/${story}`, { coverMomentId: moments[0], lockVersion: await lock() }), () => null);
  await ok('submit', await send(owner, 'post', `/api/stories/${story}/transitions`, { action: 'submit', lockVersion: await lock() }), () => null);
  await ok('claim', await send(moderator, 'post', `/api/review/stories/${story}/claim`), () => null);
  for (const [subjectType, subjectId] of [['reading', depth], ['reading', height], ['reading', after], ['clearance', before], ['clearance', faced]] as const) {
    await ok(`check ${subjectType} ${subjectId}`, await send(moderator, 'post', '/api/review/checks', { storyId: story, subjectType, subjectId, state: 'checked' }), () => null);
  }
  await ok('publish', await send(moderator, 'post', `/api/stories/${story}/transitions`, { action: 'publish', lockVersion: await lock() }), () => null);
  return story;
}

