import { execFile } from 'node:child_process';
import fs from 'node:fs/promises';
import os from 'node:os';
import path from 'node:path';
import { promisify } from 'node:util';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { mediaBinaries } from '../../../../server/features/clips/media/binaries';
import { moovBeforeMdat } from '../../../../server/features/clips/media/atoms';
import { MediaCommandFailed } from '../../../../server/features/clips/media/ffmpeg-run';
import { probeVideo } from '../../../../server/features/clips/media/probe';
import { makeWebCopy, timemarkSeconds } from '../../../../server/features/clips/media/transcode';
import { ffprobeJson, makeDisguisedFile, makeTestClip, makeTruncatedCopy } from '../../../support/clips';

const run = promisify(execFile);
let dir: string;
beforeAll(async () => {
  dir = await fs.mkdtemp(path.join(os.tmpdir(), 'benchproof-transcode-'));
});
afterAll(async () => {
  await fs.rm(dir, { recursive: true, force: true });
});

async function filesIn(folder: string) {
  return (await fs.readdir(folder)).sort();
}

describe('makeWebCopy', () => {
  it('transcodes an MPEG-4 Part 2 MKV to H.264 + AAC MP4 with the index first, reporting progress up to 100', async () => {
    const input = await makeTestClip({ format: 'mkv-mpeg4', dir, seconds: 5 });
    const out = path.join(dir, 'mpeg4-web.mp4');
    const progress: number[] = [];
    await makeWebCopy(input, out, 'transcode', { durationS: 5, onProgress: (p) => progress.push(p) });

    const { streams, format } = await ffprobeJson(out);
    expect(format.format_name).toContain('mp4');
    expect(streams.map((s) => [s.codec_type, s.codec_name])).toEqual([
      ['video', 'h264'],
      ['audio', 'aac'],
    ]);
    expect(streams[0]!.pix_fmt).toBe('yuv420p');
    expect(await moovBeforeMdat(out)).toBe(true);
    expect(Number(format.duration)).toBeCloseTo(5, 0);
    expect(progress.at(-1)).toBe(100);
    expect(progress).toEqual([...progress].sort((a, b) => a - b));
  });

  it('re-encodes with a keyframe every second so players and stills seek quickly', async () => {
    const input = await makeTestClip({ format: 'mkv-mpeg4', dir, seconds: 4, audio: false, name: 'gop' });
    const out = path.join(dir, 'gop-web.mp4');
    await makeWebCopy(input, out, 'transcode', { durationS: 4 });
    const { stdout } = await run(mediaBinaries().ffprobe, ['-v', 'error', '-select_streams', 'v:0', '-show_entries', 'packet=pts_time,flags', '-of', 'csv=p=0', out]);
    const keyTimes = stdout
      .trim()
      .split('\n')
      .filter((line) => line.includes('K'))
      .map((line) => Number(line.split(',')[0]));
    expect(keyTimes.map(Math.round)).toEqual([0, 1, 2, 3]);
  });

  it('remuxes H.264 from MKV by copying the streams, with the index first', async () => {
    const input = await makeTestClip({ format: 'mkv-h264', dir, seconds: 3 });
    const out = path.join(dir, 'mkv-web.mp4');
    await makeWebCopy(input, out, 'remux', { durationS: 3 });
    const probe = await probeVideo(out);
    expect(probe).toMatchObject({ container: 'mp4', videoCodec: 'h264', audioCodec: 'aac', width: 320, height: 240 });
    expect(await moovBeforeMdat(out)).toBe(true);
  });

  it('keeps a phone MOV upright: remux keeps the rotation, transcode turns the picture and clears it', async () => {
    const input = await makeTestClip({ format: 'mov-no-faststart', dir, seconds: 2, rotate: 90, name: 'portrait' });
    expect(await probeVideo(input)).toMatchObject({ width: 320, height: 240, rotation: 90 });

    const remuxed = path.join(dir, 'portrait-remux.mp4');
    await makeWebCopy(input, remuxed, 'remux', { durationS: 2 });
    expect(await probeVideo(remuxed)).toMatchObject({ width: 320, height: 240, rotation: 90 });
    expect(await moovBeforeMdat(remuxed)).toBe(true);

    const transcoded = path.join(dir, 'portrait-transcode.mp4');
    await makeWebCopy(input, transcoded, 'transcode', { durationS: 2 });
    expect(await probeVideo(transcoded)).toMatchObject({ width: 240, height: 320, rotation: 0 });
  });

  it('makes odd sizes even, which 4:2:0 H.264 needs', async () => {
    const input = await makeTestClip({ format: 'mkv-mpeg4', dir, seconds: 1, width: 321, height: 241, audio: false, name: 'odd' });
    const out = path.join(dir, 'odd-web.mp4');
    await makeWebCopy(input, out, 'transcode', { durationS: 1 });
    expect(await probeVideo(out)).toMatchObject({ width: 320, height: 240 });
  });

  it('on failure leaves no file behind and says why in a sentence', async () => {
    const sub = await fs.mkdtemp(path.join(dir, 'fail-'));
    // Starts like a MOV, so ffmpeg reads it with the MOV demuxer, but its index never came.
    const whole = await makeTestClip({ format: 'mov-no-faststart', dir: sub, seconds: 3, name: 'whole' });
    const input = await makeTruncatedCopy(whole, 0.4);
    await fs.rm(whole);
    const out = path.join(sub, 'web.mp4');
    const err = await makeWebCopy(input, out, 'transcode', { durationS: 3 }).catch((e: unknown) => e);
    expect(err).toBeInstanceOf(MediaCommandFailed);
    expect((err as Error).message).toMatch(/^Could not convert the video for browsers: .*moov atom not found.*Invalid data found when processing input\.$/);
    expect(await filesIn(sub)).toEqual([path.basename(input)]);
  });

  it('refuses a file that is not in a video container before ffmpeg reads it', async () => {
    const sub = await fs.mkdtemp(path.join(dir, 'html-'));
    const input = await makeDisguisedFile('html', sub);
    const err = await makeWebCopy(input, path.join(sub, 'web.mp4'), 'remux', { durationS: 5 }).catch((e: unknown) => e);
    expect(err).toBeInstanceOf(MediaCommandFailed);
    expect((err as Error).message).toBe('Could not copy the video into MP4: the file is not in a video container Benchproof reads.');
    expect(await filesIn(sub)).toEqual([path.basename(input)]);
  });

  it('when aborted, stops ffmpeg and deletes the partial file', async () => {
    const sub = await fs.mkdtemp(path.join(dir, 'abort-'));
    const input = await makeTestClip({ format: 'mkv-mpeg4', dir: sub, seconds: 30, width: 640, height: 480, name: 'long' });
    const out = path.join(sub, 'web.mp4');
    const controller = new AbortController();
    let seen = 0;
    const err = await makeWebCopy(input, out, 'transcode', {
      durationS: 30,
      signal: controller.signal,
      onProgress: (p) => {
        seen = p;
        if (p > 0) controller.abort();
      },
    }).catch((e: unknown) => e);
    expect((err as Error).name).toBe('AbortError');
    expect(seen).toBeLessThan(100);
    expect(await filesIn(sub)).toEqual(['long.mkv']);
  });
});

describe('timemarkSeconds', () => {
  it('reads the hh:mm:ss.xx time mark of ffmpeg progress and refuses anything else', () => {
    expect(timemarkSeconds('00:00:02.50')).toBe(2.5);
    expect(timemarkSeconds('01:02:03.25')).toBe(3723.25);
    expect(timemarkSeconds('N/A')).toBeNull();
    expect(timemarkSeconds(undefined)).toBeNull();
  });
});
