// `npm run bench:media`: figures for the clip media library on generated clips. Prints, asserts
// nothing. (a) evidence frame through extractFrame vs the same ffmpeg command spawned directly;
// (b) the processing of a browser-playable 60 s 1080p upload (probe, plan, poster, strip) vs its
// length; (c) transcoding a 60 s 1080p MPEG-4 Part 2 MKV vs real time.
import { spawn } from 'node:child_process';
import fsp from 'node:fs/promises';
import os from 'node:os';
import path from 'node:path';
import { mediaBinaries } from '../server/features/clips/media/binaries';
import { planWebCopy } from '../server/features/clips/media/plan';
import { probeVideo } from '../server/features/clips/media/probe';
import { extractFrame, extractFrameArgs, makePoster, makeThumbnailStrip } from '../server/features/clips/media/stills';
import { makeWebCopy } from '../server/features/clips/media/transcode';
import { makeTestClip } from '../tests/support/clips';

const RUNS = Number(process.env.BENCH_RUNS ?? 15);
const SECONDS = 60;

const median = (xs: number[]) => {
  const s = [...xs].sort((a, b) => a - b);
  const mid = Math.floor(s.length / 2);
  return s.length % 2 ? s[mid]! : (s[mid - 1]! + s[mid]!) / 2;
};
const ms = (x: number) => `${x.toFixed(0)} ms`;
const sec = (x: number) => `${(x / 1000).toFixed(2)} s`;

async function timed<T>(fn: () => Promise<T>): Promise<[T, number]> {
  const t0 = performance.now();
  const value = await fn();
  return [value, performance.now() - t0];
}

function spawnDirect(args: string[]): Promise<void> {
  return new Promise((resolve, reject) => {
    const child = spawn(mediaBinaries().ffmpeg, ['-hide_banner', '-nostdin', ...args], { stdio: 'ignore' });
    child.on('error', reject);
    child.on('close', (code) => (code === 0 ? resolve() : reject(new Error(`ffmpeg exited with ${code}`))));
  });
}

async function ffmpegVersion(): Promise<string> {
  return new Promise((resolve) => {
    const child = spawn(mediaBinaries().ffmpeg, ['-version']);
    let out = '';
    child.stdout.on('data', (c: Buffer) => (out += c.toString()));
    child.on('close', () => resolve(out.split('\n')[0]?.replace(/ Copyright.*/, '') ?? '?'));
  });
}

async function main() {
  const dir = await fsp.mkdtemp(path.join(os.tmpdir(), 'benchproof-bench-media-'));
  const log = (s: string) => process.stderr.write(`[bench:media] ${s}\n`);
  try {
    log(`generating a ${SECONDS} s 1080p30 H.264 + AAC MP4, keyframe every 1 s like a phone (takes a while)…`);
    const phone = await makeTestClip({ format: 'mp4-h264', dir, seconds: SECONDS, width: 1920, height: 1080, keyframeEveryS: 1, name: 'phone-1080p' });
    log('generating the same with x264’s default keyframe interval (250 frames, 8.3 s), like some cameras…');
    const longGop = await makeTestClip({ format: 'mp4-h264', dir, seconds: SECONDS, width: 1920, height: 1080, name: 'long-gop-1080p' });
    log(`generating a ${SECONDS} s 1080p30 MPEG-4 Part 2 + MP3 MKV…`);
    const legacy = await makeTestClip({ format: 'mkv-mpeg4', dir, seconds: SECONDS, width: 1920, height: 1080, name: 'mpeg4-1080p' });

    // (a) Evidence frame, half a second after a keyframe (15 frames to decode), alternating order.
    log(`(a) evidence frame at 30.5 s, ${RUNS} runs each…`);
    const atS = 30.5;
    const ours: number[] = [];
    const direct: number[] = [];
    for (let i = 0; i < RUNS + 1; i++) {
      const run = async (kind: 'ours' | 'direct') => {
        const out = path.join(dir, `frame-${kind}-${i}.jpg`);
        const [, t] = await timed(() => (kind === 'ours' ? extractFrame(phone, atS, out) : spawnDirect(extractFrameArgs(phone, atS, out))));
        // The first pair warms the page cache and the binary; not counted.
        if (i > 0) (kind === 'ours' ? ours : direct).push(t);
      };
      if (i % 2) {
        await run('ours');
        await run('direct');
      } else {
        await run('direct');
        await run('ours');
      }
    }
    const overhead = ((median(ours) - median(direct)) / median(direct)) * 100;

    // (b) What a browser-playable upload costs: the product's path with no web copy to make.
    const processUpload = async (file: string) => {
      const steps: Record<string, number> = {};
      const [probe, tProbe] = await timed(() => probeVideo(file, { maxSeconds: 7200 }));
      steps.probe = tProbe;
      const [plan, tPlan] = await timed(() => planWebCopy(probe, probe.container, file));
      steps.plan = tPlan;
      [, steps.poster] = await timed(() => makePoster(file, path.join(dir, `poster-${path.basename(file)}.jpg`), 0));
      const count = Math.max(1, Math.min(60, Math.ceil(probe.durationS)));
      [, steps.strip] = await timed(() => makeThumbnailStrip(file, path.join(dir, `strip-${path.basename(file)}.jpg`), { count, tileWidth: 160 }));
      const total = Object.values(steps).reduce((a, b) => a + b, 0);
      return { plan, steps, total };
    };
    log('(b) probe + plan + poster + thumbnail strip…');
    const b = await processUpload(phone);
    const bLong = await processUpload(longGop);

    // (c) Transcode to the web copy.
    log('(c) transcoding the MPEG-4 Part 2 MKV…');
    const [, tTranscode] = await timed(() => makeWebCopy(legacy, path.join(dir, 'web.mp4'), 'transcode', { durationS: SECONDS }));

    const cpus = os.availableParallelism?.() ?? os.cpus().length;
    const rows: [string, string, string, string][] = [
      ['(a) evidence frame 1080p, median of ' + RUNS, `extractFrame ${ms(median(ours))} vs direct ${ms(median(direct))}`, `overhead ${overhead.toFixed(1)} %`, '≤ 10 %'],
      [
        `(b) playable upload, 1 s keyframes (plan: ${b.plan})`,
        Object.entries(b.steps).map(([k, v]) => `${k} ${ms(v)}`).join(', '),
        `${sec(b.total)} = ${((b.total / 1000 / SECONDS) * 100).toFixed(1)} % of ${SECONDS} s`,
        '< 5 %',
      ],
      [
        `(b') same, 8.3 s keyframes (plan: ${bLong.plan})`,
        Object.entries(bLong.steps).map(([k, v]) => `${k} ${ms(v)}`).join(', '),
        `${sec(bLong.total)} = ${((bLong.total / 1000 / SECONDS) * 100).toFixed(1)} % of ${SECONDS} s`,
        '(no goal)',
      ],
      [`(c) transcode 1080p MPEG-4 MKV → H.264 MP4`, `${sec(tTranscode)} for ${SECONDS} s of video`, `${(SECONDS / (tTranscode / 1000)).toFixed(2)}× real time`, `> 1× on 2 cores`],
    ];
    console.log(`\nBenchproof media benchmark: ${await ffmpegVersion()}; ${cpus} CPUs (${os.cpus()[0]?.model.trim() ?? '?'}); node ${process.version}\n`);
    const header: [string, string, string, string] = ['case', 'measured', 'result', 'goal'];
    const widths = header.map((h, i) => Math.max(h.length, ...rows.map((r) => r[i]!.length)));
    const line = (r: string[]) => '| ' + r.map((c, i) => c.padEnd(widths[i]!)).join(' | ') + ' |';
    console.log(line(header));
    console.log('|' + widths.map((w) => '-'.repeat(w + 2)).join('|') + '|');
    for (const r of rows) console.log(line(r));
  } finally {
    await fsp.rm(dir, { recursive: true, force: true });
  }
}

await main();
