import { execFileSync } from 'node:child_process';
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { mediaBinaries, resolveMediaBinaries, SYSTEM_BIN_DIR } from '../../../../server/features/clips/media/binaries';

let dir: string;
beforeAll(() => {
  dir = fs.mkdtempSync(path.join(os.tmpdir(), 'benchproof-bins-'));
});
afterAll(() => fs.rmSync(dir, { recursive: true, force: true }));

function firstLine(bin: string) {
  return execFileSync(bin, ['-version'], { encoding: 'utf8' }).split('\n')[0]!.trim();
}

describe('mediaBinaries', () => {
  it("reports the pair in use, where it comes from and ffmpeg's own version line", () => {
    const bins = mediaBinaries();
    expect(bins.version).toBe(firstLine(bins.ffmpeg));
    expect(bins.version).toMatch(/^ffmpeg version \S+/);
    expect(path.dirname(bins.ffprobe)).toBe(path.dirname(bins.ffmpeg));
    expect(bins.source).toBe(bins.ffmpeg.includes(`${path.sep}node_modules${path.sep}`) ? 'packaged' : 'system');
  });

  // `npm test` installs Debian's package first, so on a machine it has set up this is the system pair.
  it.runIf(fs.existsSync(path.join(SYSTEM_BIN_DIR, 'ffmpeg')))("uses Debian's ffmpeg when it is installed", () => {
    expect(mediaBinaries()).toMatchObject({ ffmpeg: '/usr/bin/ffmpeg', ffprobe: '/usr/bin/ffprobe', source: 'system' });
  });

  it('prefers a system pair that runs, reading its version line', () => {
    const sys = fs.mkdtempSync(path.join(dir, 'sys-'));
    for (const name of ['ffmpeg', 'ffprobe']) {
      fs.writeFileSync(path.join(sys, name), `#!/bin/sh\necho "${name} version 99.1-test Copyright (c) the testers"\n`, { mode: 0o755 });
    }
    expect(resolveMediaBinaries({ systemDir: sys })).toEqual({
      ffmpeg: path.join(sys, 'ffmpeg'),
      ffprobe: path.join(sys, 'ffprobe'),
      source: 'system',
      version: 'ffmpeg version 99.1-test Copyright (c) the testers',
    });
  });

  it('falls back to the npm build when the system has no ffmpeg, or one that does not run', () => {
    const empty = fs.mkdtempSync(path.join(dir, 'empty-'));
    const fallback = resolveMediaBinaries({ systemDir: empty });
    expect(fallback.source).toBe('packaged');
    expect(fallback.ffmpeg).toContain(`${path.sep}node_modules${path.sep}@ffmpeg-installer${path.sep}`);
    expect(fallback.version).toBe(firstLine(fallback.ffmpeg));

    const broken = fs.mkdtempSync(path.join(dir, 'broken-'));
    for (const name of ['ffmpeg', 'ffprobe']) fs.writeFileSync(path.join(broken, name), '#!/bin/sh\nexit 1\n', { mode: 0o755 });
    expect(resolveMediaBinaries({ systemDir: broken }).source).toBe('packaged');
  });
});
