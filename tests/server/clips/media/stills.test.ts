import fs from 'node:fs/promises';
import os from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { MediaCommandFailed } from '../../../../server/features/clips/media/ffmpeg-run';
import { extractFrame, makePoster, makeThumbnailStrip } from '../../../../server/features/clips/media/stills';
import { decodeGray, ffmpegDirect, makeTestClip, meanAbsDiff } from '../../../support/clips';

let dir: string;
let clip: string; // 5 s, 320×240, 30 fps, time and frame number burnt in
beforeAll(async () => {
  dir = await fs.mkdtemp(path.join(os.tmpdir(), 'benchproof-stills-'));
  clip = await makeTestClip({ format: 'mp4-h264', dir, seconds: 5 });
});
afterAll(async () => {
  await fs.rm(dir, { recursive: true, force: true });
});

let n = 0;
const out = (name: string) => path.join(dir, `${name}-${++n}.jpg`);

/** ffmpeg's own answer with an output-side (decode everything, then drop) seek. */
async function referenceBySeek(input: string, atS: number) {
  const file = out('ref-seek');
  await ffmpegDirect(['-v', 'error', '-i', input, '-ss', String(atS), '-frames:v', '1', '-q:v', '3', file]);
  return (await decodeGray(file)).pixels;
}

/** The frame with index `frame`, picked by number: independent of any seeking. */
async function referenceByNumber(input: string, frame: number) {
  const file = out('ref-n');
  await ffmpegDirect(['-v', 'error', '-i', input, '-vf', `select=eq(n\\,${frame})`, '-vsync', '0', '-frames:v', '1', '-q:v', '3', file]);
  return (await decodeGray(file)).pixels;
}

async function frameAt(input: string, atS: number) {
  const file = out('frame');
  await extractFrame(input, atS, file);
  return (await decodeGray(file)).pixels;
}

describe('extractFrame', () => {
  it('at 2.5 s gives the frame ffmpeg finds with an output-side accurate seek, and not the one at 1.5 s', async () => {
    const ours = await frameAt(clip, 2.5);
    expect(meanAbsDiff(ours, await referenceBySeek(clip, 2.5))).toBeLessThan(0.5);
    expect(meanAbsDiff(ours, await referenceByNumber(clip, 75))).toBeLessThan(0.5);
    expect(meanAbsDiff(ours, await referenceBySeek(clip, 1.5))).toBeGreaterThan(5);
  });

  it('between two frames gives the one on screen (the earlier), not the next', async () => {
    // 2.52 s lies inside frame 75 (2.500–2.533 s at 30 fps).
    const ours = await frameAt(clip, 2.52);
    const shown = await referenceByNumber(clip, 75);
    const next = await referenceByNumber(clip, 76);
    expect(meanAbsDiff(ours, shown)).toBeLessThan(0.5);
    expect(meanAbsDiff(ours, next)).toBeGreaterThan(2);
  });

  it('names the same frame whether a 29.97 fps timestamp was rounded or cut to the millisecond', async () => {
    const ntsc = await makeTestClip({ format: 'mp4-h264', dir, seconds: 3, fps: 30000 / 1001, name: 'ntsc' });
    // Frame 75 starts at 75 × 1001 / 30000 = 2.5025 s.
    const shown = await referenceByNumber(ntsc, 75);
    expect(meanAbsDiff(await frameAt(ntsc, 2.502), shown)).toBeLessThan(0.5);
    expect(meanAbsDiff(await frameAt(ntsc, 2.503), shown)).toBeLessThan(0.5);
  });

  it('gives the first frame at 0 s and the last at the very end', async () => {
    expect(meanAbsDiff(await frameAt(clip, 0), await referenceByNumber(clip, 0))).toBeLessThan(0.5);
    expect(meanAbsDiff(await frameAt(clip, 5), await referenceByNumber(clip, 149))).toBeLessThan(0.5);
  });

  it('writes a full-size JPEG and leaves no scratch file', async () => {
    const sub = await fs.mkdtemp(path.join(dir, 'clean-'));
    const file = path.join(sub, 'frame.jpg');
    await extractFrame(clip, 1, file);
    expect(await fs.readdir(sub)).toEqual(['frame.jpg']);
    expect(await decodeGray(file)).toMatchObject({ width: 320, height: 240 });
  });

  it('refuses a time after the end of the clip and writes nothing', async () => {
    const sub = await fs.mkdtemp(path.join(dir, 'late-'));
    const err = await extractFrame(clip, 9, path.join(sub, 'frame.jpg')).catch((e: unknown) => e);
    expect(err).toBeInstanceOf(MediaCommandFailed);
    expect((err as Error).message).toBe('There is no picture at 9.000 s in this video.');
    expect(await fs.readdir(sub)).toEqual([]);
  });
});

describe('makePoster', () => {
  it('is the picture at the time asked, upright and at most maxWidth wide', async () => {
    const poster = out('poster');
    await makePoster(clip, poster, 1);
    expect(await decodeGray(poster)).toMatchObject({ width: 320, height: 240 });
    const small = out('poster-small');
    await makePoster(clip, small, 1, { maxWidth: 160 });
    expect(await decodeGray(small)).toMatchObject({ width: 160, height: 120 });

    const portrait = await makeTestClip({ format: 'mp4-h264', dir, seconds: 2, rotate: 90, name: 'portrait' });
    const upright = out('poster-portrait');
    await makePoster(portrait, upright, 1);
    expect(await decodeGray(upright)).toMatchObject({ width: 240, height: 320 });
  });

  it('falls back to the first frame when the time is past the end', async () => {
    const poster = out('poster-late');
    await makePoster(clip, poster, 60);
    expect(meanAbsDiff((await decodeGray(poster)).pixels, await referenceByNumber(clip, 0))).toBeLessThan(1);
  });
});

describe('makeThumbnailStrip', () => {
  async function tiles(file: string, count: number) {
    const { width, height, pixels } = await decodeGray(file);
    const tileWidth = width / count;
    return Array.from({ length: count }, (_, i) => {
      const tile = Buffer.alloc(tileWidth * height);
      for (let y = 0; y < height; y++) pixels.copy(tile, y * tileWidth, y * width + i * tileWidth, y * width + (i + 1) * tileWidth);
      return tile;
    });
  }

  it.each([
    ['keyframes every second (fast path)', 1],
    ['a single keyframe (decodes everything)', undefined],
  ])('makes one JPEG of count tiles in a row from a clip with %s', async (_name, keyframeEveryS) => {
    const input = await makeTestClip({ format: 'mp4-h264', dir, seconds: 5, keyframeEveryS, name: `strip-${keyframeEveryS ?? 'long'}` });
    const file = out('strip');
    const strip = await makeThumbnailStrip(input, file, { count: 5, tileWidth: 160 });
    expect(strip).toEqual({ count: 5, intervalS: 1, width: 160, height: 120 });
    expect(await decodeGray(file)).toMatchObject({ width: 800, height: 120 });
    const each = await tiles(file, 5);
    for (let i = 1; i < each.length; i++) expect(meanAbsDiff(each[i - 1]!, each[i]!)).toBeGreaterThan(5);
  });

  it('keeps the shown shape of a portrait clip', async () => {
    const portrait = await makeTestClip({ format: 'mp4-h264', dir, seconds: 2, rotate: 90, name: 'strip-portrait' });
    const file = out('strip-portrait');
    expect(await makeThumbnailStrip(portrait, file, { count: 4, tileWidth: 90, durationS: 2 })).toEqual({ count: 4, intervalS: 0.5, width: 90, height: 120 });
    expect(await decodeGray(file)).toMatchObject({ width: 360, height: 120 });
  });
});
