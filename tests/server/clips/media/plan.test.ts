import fs from 'node:fs/promises';
import os from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { moovBeforeMdat, readTopLevelAtoms } from '../../../../server/features/clips/media/atoms';
import { chooseWebCopy, displaySize, planWebCopy, type WebCopyFacts } from '../../../../server/features/clips/media/plan';
import { probeVideo } from '../../../../server/features/clips/media/probe';
import { ffmpegDirect, makeTestClip, makeTruncatedCopy, type TestClipFormat } from '../../../support/clips';

let dir: string;
beforeAll(async () => {
  dir = await fs.mkdtemp(path.join(os.tmpdir(), 'benchproof-plan-'));
});
afterAll(async () => {
  await fs.rm(dir, { recursive: true, force: true });
});

describe('planWebCopy on real files', () => {
  it.each([
    ['mp4-h264', 'original'],
    ['webm-vp9', 'original'],
    ['mov-no-faststart', 'remux'],
    ['mkv-h264', 'remux'],
    ['mkv-mpeg4', 'transcode'],
  ] as [TestClipFormat, string][])('a %s upload gets the %s web copy', async (format, kind) => {
    const file = await makeTestClip({ format, dir, seconds: 1 });
    const probe = await probeVideo(file);
    expect(await planWebCopy(probe, probe.container, file)).toBe(kind);
  });

  it('transcodes 10-bit H.264 (High 10), which Chrome and Firefox do not decode', async () => {
    const file = path.join(dir, 'ten-bit.mp4');
    await ffmpegDirect(['-v', 'error', '-f', 'lavfi', '-i', 'testsrc2=size=160x120:duration=1', '-c:v', 'libx264', '-pix_fmt', 'yuv420p10le', '-movflags', '+faststart', file]);
    const probe = await probeVideo(file);
    expect(probe.videoCodec).toBe('h264');
    expect(await planWebCopy(probe, probe.container, file)).toBe('transcode');
  });
});

describe('chooseWebCopy rules', () => {
  const h264Mp4: WebCopyFacts = { container: 'mp4', videoCodec: 'h264', audioCodec: 'aac', pixelFormat: 'yuv420p', fastStart: true };
  it.each([
    ['H.264 + AAC in fast-start MP4', {}, 'original'],
    ['H.264 + MP3 in MOV', { container: 'mov', audioCodec: 'mp3' }, 'original'],
    ['silent H.264 in M4V', { container: 'm4v', audioCodec: null }, 'original'],
    ['H.264 MP4 with the index at the end', { fastStart: false }, 'remux'],
    ['H.264 + AAC in MPEG-TS', { container: 'mpegts', fastStart: null }, 'remux'],
    ['H.264 + AAC in AVI', { container: 'avi', fastStart: null }, 'remux'],
    ['H.264 in 3GP', { container: '3gp' }, 'remux'],
    ['HEVC in MP4', { videoCodec: 'hevc' }, 'transcode'],
    ['ProRes in MOV', { container: 'mov', videoCodec: 'prores', pixelFormat: 'yuv422p10le', audioCodec: 'pcm_s16le' }, 'transcode'],
    ['MPEG-4 Part 2 in AVI', { container: 'avi', videoCodec: 'mpeg4', audioCodec: 'mp3', fastStart: null }, 'transcode'],
    ['H.264 4:2:2 in MOV', { container: 'mov', pixelFormat: 'yuv422p' }, 'transcode'],
    ['H.264 with PCM sound in MOV', { container: 'mov', audioCodec: 'pcm_s16le' }, 'transcode'],
    ['H.264 with AC-3 sound in MKV', { container: 'matroska', audioCodec: 'ac3', fastStart: null }, 'transcode'],
    ['VP9 + Opus in WebM', { container: 'webm', videoCodec: 'vp9', audioCodec: 'opus', fastStart: null }, 'original'],
    ['VP8 + Vorbis in WebM', { container: 'webm', videoCodec: 'vp8', audioCodec: 'vorbis', fastStart: null }, 'original'],
    ['VP9 + Opus in MKV (web copy is MP4)', { container: 'matroska', videoCodec: 'vp9', audioCodec: 'opus', fastStart: null }, 'transcode'],
    ['AV1 in WebM', { container: 'webm', videoCodec: 'av1', audioCodec: 'opus', fastStart: null }, 'transcode'],
  ] as [string, Partial<WebCopyFacts>, string][])('%s → %s', (_name, change, kind) => {
    expect(chooseWebCopy({ ...h264Mp4, ...change })).toBe(kind);
  });
});

describe('moovBeforeMdat', () => {
  it('is true for a fast-start MP4, false for a MOV written in one pass, null for MKV', async () => {
    expect(await moovBeforeMdat(await makeTestClip({ format: 'mp4-h264', dir, seconds: 1, name: 'fast' }))).toBe(true);
    expect(await moovBeforeMdat(await makeTestClip({ format: 'mov-no-faststart', dir, seconds: 1, name: 'slow' }))).toBe(false);
    expect(await moovBeforeMdat(await makeTestClip({ format: 'mkv-h264', dir, seconds: 1, name: 'mkv' }))).toBeNull();
  });

  it('lists top-level atoms and flags a file cut inside its data', async () => {
    const file = await makeTestClip({ format: 'mp4-h264', dir, seconds: 2, name: 'atoms' });
    const whole = await readTopLevelAtoms(file);
    expect(whole.atoms.map((a) => a.type)).toEqual(expect.arrayContaining(['ftyp', 'moov', 'mdat']));
    expect(whole.truncated).toBe(false);
    expect((await readTopLevelAtoms(await makeTruncatedCopy(file, 0.5))).truncated).toBe(true);
  });
});

describe('displaySize', () => {
  it('swaps width and height for quarter turns', () => {
    expect(displaySize({ width: 1920, height: 1080, rotation: 90 })).toEqual({ width: 1080, height: 1920 });
    expect(displaySize({ width: 1920, height: 1080, rotation: 180 })).toEqual({ width: 1920, height: 1080 });
  });
});
