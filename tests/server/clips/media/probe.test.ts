import fs from 'node:fs/promises';
import os from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { clipProbeSchema } from '../../../../shared/clips/clip.schema';
import { MediaRejected, probeVideo } from '../../../../server/features/clips/media/probe';
import { ffmpegDirect, makeDisguisedFile, makeTestClip, makeTruncatedCopy, makeZeroByteFile } from '../../../support/clips';

let dir: string;
beforeAll(async () => {
  dir = await fs.mkdtemp(path.join(os.tmpdir(), 'benchproof-probe-'));
});
afterAll(async () => {
  await fs.rm(dir, { recursive: true, force: true });
});

async function rejection(file: string, options = {}): Promise<MediaRejected> {
  const err = await probeVideo(file, options).then(
    () => null,
    (e: unknown) => e,
  );
  expect(err).toBeInstanceOf(MediaRejected);
  return err as MediaRejected;
}

describe('probeVideo', () => {
  it('reports container, codecs, duration, size, frame rate and rotation of an H.264 MP4', async () => {
    const file = await makeTestClip({ format: 'mp4-h264', dir, seconds: 5, width: 320, height: 240 });
    const probe = await probeVideo(file);
    expect(clipProbeSchema.parse(probe)).toEqual(probe);
    expect(probe).toMatchObject({ container: 'mp4', videoCodec: 'h264', audioCodec: 'aac', width: 320, height: 240, frameRate: 30, rotation: 0 });
    expect(probe.durationS).toBeGreaterThan(4.9);
    expect(probe.durationS).toBeLessThan(5.2);
  });

  it('reads an MKV with MPEG-4 Part 2 and MP3, and a silent WebM', async () => {
    const mkv = await probeVideo(await makeTestClip({ format: 'mkv-mpeg4', dir, seconds: 2 }));
    expect(mkv).toMatchObject({ container: 'matroska', videoCodec: 'mpeg4', audioCodec: 'mp3', width: 320, height: 240 });
    const webm = await probeVideo(await makeTestClip({ format: 'webm-vp9', dir, seconds: 2, audio: false }));
    expect(webm).toMatchObject({ container: 'webm', videoCodec: 'vp9', audioCodec: null });
    expect(webm.durationS).toBeCloseTo(2, 0);
  });

  it('reads the display rotation a phone writes, and keeps the stored size', async () => {
    const file = await makeTestClip({ format: 'mp4-h264', dir, seconds: 1, rotate: 90, name: 'rotated' });
    expect(await probeVideo(file)).toMatchObject({ width: 320, height: 240, rotation: 90 });
  });

  it('refuses an HTML page renamed .mp4 as not a video, saying what it looks like', async () => {
    const err = await rejection(await makeDisguisedFile('html', dir));
    expect(err.code).toBe('not_a_video');
    expect(err.message).toBe(
      'This file is not a video (it looks like an HTML page). Upload the clip as your camera or phone recorded it (MP4, MOV, MKV, WebM, AVI…).',
    );
  });

  it('refuses a JPEG renamed .mp4 and an empty file', async () => {
    expect((await rejection(await makeDisguisedFile('jpeg', dir))).message).toContain('it looks like a JPEG photo');
    expect((await rejection(await makeZeroByteFile(dir))).code).toBe('empty_file');
  });

  it('refuses an MP4 cut off at 40 % (index first) as damaged', async () => {
    const whole = await makeTestClip({ format: 'mp4-h264', dir, seconds: 5, name: 'whole' });
    const err = await rejection(await makeTruncatedCopy(whole, 0.4));
    expect(err.code).toBe('damaged_video');
    expect(err.message).toMatch(/^This video is damaged or incomplete: .*cut short.*Copy it from the camera or phone again/);
  });

  it('refuses an MOV cut off at 40 % (index at the end, so no moov atom) as damaged', async () => {
    const whole = await makeTestClip({ format: 'mov-no-faststart', dir, seconds: 5, name: 'whole-mov' });
    const err = await rejection(await makeTruncatedCopy(whole, 0.4));
    expect(err.code).toBe('damaged_video');
  });

  it('refuses a cut-off MKV whose header still looks whole, by decoding near its end', async () => {
    const whole = await makeTestClip({ format: 'mkv-h264', dir, seconds: 6, name: 'whole-mkv', keyframeEveryS: 1 });
    const cut = await makeTruncatedCopy(whole, 0.4);
    const err = await probeVideo(cut).then(
      () => null,
      (e: unknown) => e,
    );
    // Matroska's duration sits in its header, so the cut shows only when decoding.
    expect(err).toBeInstanceOf(MediaRejected);
    expect((err as MediaRejected).code).toBe('damaged_video');
  });

  it('refuses a file with sound but no pictures', async () => {
    const audioOnly = path.join(dir, 'sound.mkv');
    await ffmpegDirect(['-v', 'error', '-f', 'lavfi', '-i', 'sine=duration=1', '-c:a', 'libvorbis', '-f', 'matroska', audioOnly]);
    const err = await rejection(audioOnly);
    expect(err.code).toBe('no_video_stream');
    expect(err.message).toBe('This file has no video track, only sound. Upload a video clip.');
  });

  it('refuses a clip longer than the limit, naming both lengths', async () => {
    const file = await makeTestClip({ format: 'mp4-h264', dir, seconds: 3, name: 'three' });
    const err = await rejection(file, { maxSeconds: 2 });
    expect(err.code).toBe('too_long');
    expect(err.message).toBe('This clip is 3 s long; the longest Benchproof accepts is 2 s. Trim it or split it into shorter clips, then upload again.');
  });
});
