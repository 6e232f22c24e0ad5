import fs from 'node:fs/promises';
import { existsSync } from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { MediaCommandFailed, runFfmpeg } from '../../../../server/features/clips/media/ffmpeg-run';
import { makeTestClip } from '../../../support/clips';

const MiB = 1024 ** 2;
const hasPrlimit = existsSync('/usr/bin/prlimit');

let dir: string;
let clip: string; // 5 s, 320×240
beforeAll(async () => {
  dir = await fs.mkdtemp(path.join(os.tmpdir(), 'benchproof-run-'));
  clip = await makeTestClip({ format: 'mp4-h264', dir, seconds: 5, audio: false });
});
afterAll(async () => {
  await fs.rm(dir, { recursive: true, force: true });
});

async function failure(promise: Promise<unknown>): Promise<MediaCommandFailed> {
  const err = await promise.then(
    () => null,
    (e: unknown) => e,
  );
  expect(err).toBeInstanceOf(MediaCommandFailed);
  return err as MediaCommandFailed;
}

describe('runFfmpeg limits', () => {
  it('kills a command that runs past its wall-clock bound and says so', async () => {
    const started = Date.now();
    // -re reads the 5 s clip at its own pace, so it would take 5 s.
    const err = await failure(
      runFfmpeg(['-v', 'error', '-re', '-f', 'mov', '-i', clip, '-f', 'null', '-'], { what: 'read the video', limits: { timeoutS: 0.3 } }),
    );
    expect(err.message).toBe('Could not read the video: it took longer than 300 ms and was stopped.');
    expect(Date.now() - started).toBeLessThan(3000);
  });

  it('lets the same command finish within a bound that is long enough', async () => {
    const { stdout } = await runFfmpeg(['-v', 'error', '-f', 'mov', '-i', clip, '-frames:v', '1', '-f', 'rawvideo', '-pix_fmt', 'gray', 'pipe:1'], {
      what: 'read the video',
      limits: { timeoutS: 30 },
    });
    expect(stdout.length).toBe(320 * 240);
  });

  it.runIf(hasPrlimit)('stops a command that uses up its processor time', async () => {
    const started = Date.now();
    const err = await failure(
      runFfmpeg(['-v', 'error', '-f', 'lavfi', '-i', 'testsrc2=size=1280x720:rate=30', '-c:v', 'libx264', '-preset', 'slower', '-f', 'null', '-'], {
        what: 'encode the test pattern',
        limits: { timeoutS: 60, cpuSeconds: 1 },
      }),
    );
    expect(err.message).toMatch(/^Could not encode the test pattern: it was stopped by the system \(SIGKILL\), most likely for using more than its 1 s of processor time\.$/);
    expect(Date.now() - started).toBeLessThan(30_000);
  });

  it.runIf(hasPrlimit)('refuses to map more memory than its address-space limit', async () => {
    const args = ['-v', 'error', '-f', 'lavfi', '-i', 'testsrc2=size=3840x2160', '-frames:v', '1', '-c:v', 'libx264', '-preset', 'ultrafast', '-f', 'null', '-'];
    const err = await failure(runFfmpeg(args, { what: 'encode a 4K picture', limits: { memoryBytes: 420 * MiB } }));
    expect(err.message).toMatch(/^Could not encode a 4K picture: .*(malloc|alloc|memory|map)/i);
    // The default limit leaves room for it.
    await expect(runFfmpeg(args, { what: 'encode a 4K picture' })).resolves.toMatchObject({ stderr: '' });
  });
});

describe('runFfmpeg outputs', () => {
  it('writes a picture to a file and raw pixels to a pipe', async () => {
    const file = path.join(dir, 'still.jpg');
    await runFfmpeg(['-v', 'error', '-f', 'mov', '-i', clip, '-frames:v', '1', '-f', 'image2', '-update', '1', '-y', file], { what: 'take a picture' });
    expect((await fs.stat(file)).size).toBeGreaterThan(0);
    const { stdout } = await runFfmpeg(['-v', 'error', '-f', 'mov', '-i', clip, '-frames:v', '2', '-f', 'rawvideo', '-pix_fmt', 'gray', 'pipe:1'], {
      what: 'read the video',
    });
    expect(stdout.length).toBe(2 * 320 * 240);
  });

  it('refuses arguments whose last one is an option rather than the output', async () => {
    await expect(runFfmpeg(['-v', 'error', '-f', 'mov', '-i', clip, '-y'], { what: 'do nothing' })).rejects.toThrow(RangeError);
  });
});
