import fs from 'node:fs/promises';
import os from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { MediaCommandFailed } from '../../../../server/features/clips/media/ffmpeg-run';
import { extractFrame, keyframesFit, makePoster, makeThumbnailStrip } from '../../../../server/features/clips/media/stills';
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

  /** Frame number `frame` of `input`, scaled and stored like a tile. */
  async function referenceTile(input: string, frame: number, width: number, height: number) {
    const file = out('ref-tile');
    await ffmpegDirect(['-v', 'error', '-i', input, '-vf', `select=eq(n\\,${frame}),scale=${width}:${height},setsar=1`, '-vsync', '0', '-frames:v', '1', '-q:v', '4', file]);
    return (await decodeGray(file)).pixels;
  }

  // 5 s at 30 fps, no sound (so the clip lasts exactly 5 s), 5 tiles: the middles are 0.5, 1.5 … 4.5 s.
  it.each([
    // Keyframes at 0, 1 … 4 s: each tile shows the last keyframe at or before its middle.
    ['keyframes every second, from the keyframes alone', 1, (i: number) => 30 * i],
    // One keyframe: every frame is decoded and each tile shows the frame on screen at its middle.
    ['a single keyframe, from every frame', undefined, (i: number) => 30 * i + 15],
  ])('makes one JPEG of count tiles in a row from a clip with %s, each tile the right frame', async (_name, keyframeEveryS, expectedFrame) => {
    const input = await makeTestClip({ format: 'mp4-h264', dir, seconds: 5, keyframeEveryS, audio: false, name: `strip-${keyframeEveryS ?? 'long'}` });
    const file = out('strip');
    const strip = await makeThumbnailStrip(input, file, { count: 5, tileWidth: 160 });
    expect(strip).toEqual({ count: 5, intervalS: 1, width: 160, height: 120 });
    expect(await decodeGray(file)).toMatchObject({ width: 800, height: 120 });
    const each = await tiles(file, 5);
    for (const [i, tile] of each.entries()) {
      const frame = expectedFrame(i);
      const diff = meanAbsDiff(tile, await referenceTile(input, frame, 160, 120));
      expect(diff, `tile ${i} against frame ${frame}`).toBeLessThan(1.5);
      // A third of a second either side is clearly another picture.
      if (frame >= 10) expect(meanAbsDiff(tile, await referenceTile(input, frame - 10, 160, 120))).toBeGreaterThan(diff + 1);
      expect(meanAbsDiff(tile, await referenceTile(input, frame + 10, 160, 120))).toBeGreaterThan(diff + 1);
    }
  });

  it('fills every tile when there are more tiles than keyframes, repeating the nearest earlier one', async () => {
    // 6 tiles over 5 s (0.833 s each) and keyframes every second: tile 3 (middle 2.92 s) repeats the keyframe at 2 s.
    const input = await makeTestClip({ format: 'mp4-h264', dir, seconds: 5, keyframeEveryS: 1, audio: false, name: 'strip-six' });
    const file = out('strip-six');
    expect(await makeThumbnailStrip(input, file, { count: 6, tileWidth: 160 })).toEqual({ count: 6, intervalS: 0.833, width: 160, height: 120 });
    const each = await tiles(file, 6);
    const expected = [0, 30, 60, 60, 90, 120];
    for (const [i, tile] of each.entries()) {
      expect(meanAbsDiff(tile, await referenceTile(input, expected[i]!, 160, 120)), `tile ${i}`).toBeLessThan(1.5);
    }
  });

  it('takes the keyframes alone only when every tile has one within 1.5 intervals of its middle', () => {
    expect(keyframesFit([0, 1, 2, 3, 4], 6, 5 / 6)).toBe(true);
    // Middles 0.5 … 4.5 s; keyframes 2 s apart leave 1.5 s at most: just fits.
    expect(keyframesFit([0, 2, 4], 5, 1)).toBe(true);
    // 3 s apart: the tile at 2.5 s would show 0 s.
    expect(keyframesFit([0, 3], 5, 1)).toBe(false);
    expect(keyframesFit([0], 5, 1)).toBe(false);
    expect(keyframesFit([], 1, 1)).toBe(false);
  });

  it('keeps the shown shape of a portrait clip', async () => {
    const portrait = await makeTestClip({ format: 'mp4-h264', dir, seconds: 2, rotate: 90, name: 'strip-portrait' });
    const file = out('strip-portrait');
    expect(await makeThumbnailStrip(portrait, file, { count: 4, tileWidth: 90, durationS: 2 })).toEqual({ count: 4, intervalS: 0.5, width: 90, height: 120 });
    expect(await decodeGray(file)).toMatchObject({ width: 360, height: 120 });
  });
});
