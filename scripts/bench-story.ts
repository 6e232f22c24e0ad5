// `npm run bench:story`: throughput and latency of GET /api/public/stories/:id for a published
// story with 40 claims over 6 clips, beside a bare Express route answering a static JSON body
// of the same size, on this machine (autocannon, one run each). Prints figures, asserts nothing.
// Uses its own throwaway cluster (.data/postgres-bench), never the demo or test data.
import http from 'node:http';
import type { AddressInfo } from 'node:net';
import os from 'node:os';
import autocannon from 'autocannon';
import express from 'express';
import { clearanceInputSchema } from '../shared/clearances/clearance.schema';
import { readingInputSchema } from '../shared/readings/reading.schema';
import { createApp } from '../server/app';
import { createClearance } from '../server/features/clearances/clearances.service';
import { Moment } from '../server/features/clips/clip.model';
import { createReading } from '../server/features/readings/readings.service';
import { claimStory, evidenceOf, recordCheck, transition } from '../server/features/review/review.service';
import { Story } from '../server/features/stories/story.model';
import { createStory } from '../server/features/stories/stories.service';
import { localStorage } from '../server/storage/local-storage';
import { benchEnvironment, benchFixtures, readyClip } from './lib/bench-env';

const SECONDS = Number(process.env.BENCH_SECONDS ?? 10);
const CONNECTIONS = Number(process.env.BENCH_CONNECTIONS ?? 10);

const { config, sequelize, logger, mediaDir, close } = await benchEnvironment('postgres-bench', 54360);

try {
  // A published story with 40 claims: 20 readings cited directly and 20 clearances, over 6 clips (invented figures).
  const { owner, moderator, build, mic, version } = await benchFixtures({ title: 'Benchmark build (invented)', subject: 'forty claims over six clips' });
  const clips = await Promise.all(Array.from({ length: 6 }, (_, i) => readyClip(build.id, `Benchmark clip ${i + 1}`, i, `bench-${i + 1}.mp4`)));
  const claims: string[] = [];
  for (let i = 0; i < 40; i += 1) {
    const moment = await Moment.create({ clipId: clips[i % 6]!.id, atMs: 1000 + i * 1000, label: `station ${i + 1}`, createdBy: owner.id });
    const value = (0.5 + i * 0.0003).toFixed(4);
    await createReading(build, owner, readingInputSchema.parse({ momentId: moment.id, instrumentId: mic.id, key: `r${i + 1}`, name: `Station ${i + 1}`, kind: 'direct', value, takenOn: '2026-11-10' }));
  }
  const readings = (await import('../server/features/readings/readings.service')).readingDtosForBuild;
  const all = await readings(build.id);
  for (let i = 0; i < 20; i += 1) {
    await createClearance(
      build,
      owner,
      clearanceInputSchema.parse({
        key: `c${i + 1}`,
        name: `Gap ${i + 1}`,
        template: 'custom',
        terms: [
          { readingId: all[i + 20]!.id, sign: 1 },
          { readingId: all[i]!.id, sign: -1 },
        ],
        specVersionId: version.id,
      }),
    );
    claims.push(`[gap ${i + 1}](clearance:c${i + 1})`, `[station ${i + 1}](reading:r${i + 1})`);
  }
  const body = claims.map((c, i) => `Paragraph ${i + 1} of the benchmark entry cites ${c}.`).join('\n\n');
  const story = await createStory(build, owner, { title: 'Benchmark entry (invented)', summary: 'Forty claims.', workDate: '2026-11-10', body });
  const review = { config, queue: null };
  const lock = async () => (await Story.findByPk(story.id))!.lockVersion;
  await transition(story.id, owner, { action: 'submit', lockVersion: await lock() }, review);
  await claimStory(story.id, moderator, review);
  const e = await evidenceOf((await Story.findByPk(story.id))!);
  for (const r of e.citedReadings) await recordCheck(moderator, { storyId: story.id, subjectType: 'reading', subjectId: r.id, state: 'checked', comment: '' }, review);
  for (const c of e.citedClearances) await recordCheck(moderator, { storyId: story.id, subjectType: 'clearance', subjectId: c.id, state: 'checked', comment: '' }, review);
  await transition(story.id, moderator, { action: 'publish', lockVersion: await lock() }, review);

  const built = createApp({ config, sequelize, logger, storage: localStorage(mediaDir), queue: null });
  const server = http.createServer(built.app);
  await new Promise<void>((r) => server.listen(0, '127.0.0.1', r));
  const base = `http://127.0.0.1:${(server.address() as AddressInfo).port}`;
  const url = `${base}/api/public/stories/${story.id}`;
  const first = await fetch(url, { headers: { 'accept-encoding': 'identity' } });
  if (first.status !== 200) throw new Error(`the published story answered ${first.status}: ${await first.text()}`);
  const text = await first.text();
  const etag = first.headers.get('etag');
  const parsed = JSON.parse(text) as { claims?: unknown[] };

  // The bare route: the same bytes, from memory, through Express.
  const bare = express();
  bare.get('/story', (_req, res) => {
    res.type('application/json').send(text);
  });
  const bareServer = http.createServer(bare);
  await new Promise<void>((r) => bareServer.listen(0, '127.0.0.1', r));
  const bareUrl = `http://127.0.0.1:${(bareServer.address() as AddressInfo).port}/story`;

  const run = (target: string, headers: Record<string, string> = {}) =>
    autocannon({ url: target, connections: CONNECTIONS, duration: SECONDS, headers });
  const row = (name: string, r: autocannon.Result) =>
    `${name.padEnd(44)} ${r.requests.average.toFixed(0).padStart(7)} req/s   p50 ${String(r.latency.p50).padStart(3)} ms   p99 ${String(r.latency.p99).padStart(3)} ms   2xx ${r['2xx']} 3xx ${r['3xx']} other ${r['4xx'] + r['5xx'] + r.errors}`;

  console.log(`Published story ${story.id}: ${parsed.claims?.length ?? '?'} claims over ${clips.length} clips; body ${text.length} bytes; ETag ${etag}`);
  console.log(`Machine: ${os.cpus().length} cores (${os.cpus()[0]?.model ?? 'unknown'}), Node ${process.version}; ${CONNECTIONS} connections, ${SECONDS} s each`);
  const bareResult = await run(bareUrl);
  const storyResult = await run(url);
  const notModified = await run(url, etag ? { 'if-none-match': etag } : {});
  // What a browser gets: the page gzipped once per revision and kept (autocannon does not inflate it).
  const gzipped = await run(url, { 'accept-encoding': 'gzip' });
  const gzipBytes = await new Promise<number>((resolve, reject) => {
    http.get(url, { headers: { 'accept-encoding': 'gzip' } }, (res) => {
      let n = 0;
      res.on('data', (c: Buffer) => (n += c.length));
      res.on('end', () => resolve(n));
    }).on('error', reject);
  });
  console.log(row('bare Express, same-sized static JSON', bareResult));
  console.log(row('GET /api/public/stories/:id (200)', storyResult));
  console.log(row('same, If-None-Match (304)', notModified));
  console.log(row(`same, Accept-Encoding: gzip (${gzipBytes} bytes)`, gzipped));
  console.log(`Story route throughput = ${((storyResult.requests.average / bareResult.requests.average) * 100).toFixed(0)} % of the bare route (goal ≥ 50 %); p99 ${storyResult.latency.p99} ms (goal < 50 ms).`);

  await new Promise<void>((r) => server.close(() => r()));
  await new Promise<void>((r) => bareServer.close(() => r()));
  await built.close();
} finally {
  await close();
}
