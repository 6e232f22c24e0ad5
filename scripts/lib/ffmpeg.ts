import { spawnSync } from 'node:child_process';
import fs from 'node:fs';
import path from 'node:path';

const log = (msg: string) => console.log(`[ffmpeg] ${msg}`);
const INSTALL = 'apt-get install -y --no-install-recommends ffmpeg';

/** Where Debian's package puts the pair. */
const DEBIAN_BIN = '/usr/bin';

/** What ensureSystemFfmpeg found or did. */
export interface SystemFfmpeg {
  /** Folder holding ffmpeg and ffprobe, or null when the media code must fall back to the npm build. */
  binDir: string | null;
  installed: boolean;
}

/**
 * Makes sure Debian's ffmpeg (and ffprobe) is installed: uploads are decoded by it, and Debian
 * ships its security fixes. As root a missing package is installed with apt-get, as PostgreSQL
 * is; otherwise the command to run is printed and the media code falls back to the ffmpeg
 * build shipped in npm. Also says when util-linux's prlimit is missing (the CPU and memory
 * limits on every ffmpeg run need it).
 */
export function ensureSystemFfmpeg(): SystemFfmpeg {
  if (!fs.existsSync('/usr/bin/prlimit')) {
    log('/usr/bin/prlimit is missing: ffmpeg will run without CPU and memory limits. Install util-linux to get them.');
  }
  if (hasPair(DEBIAN_BIN)) return { binDir: DEBIAN_BIN, installed: false };
  if (process.getuid?.() !== 0) {
    log(`Debian's ffmpeg is not installed; using the npm build, which gets no security fixes. Install it with: sudo ${INSTALL}`);
    return { binDir: null, installed: false };
  }
  log(`not installed; installing Debian package "ffmpeg" (apt-get)…`);
  const env = { ...process.env, DEBIAN_FRONTEND: 'noninteractive' };
  const steps: string[][] = [
    ['update', '-q'],
    ['install', '-y', '-q', '--no-install-recommends', 'ffmpeg'],
  ];
  for (const args of steps) {
    const r = spawnSync('apt-get', args, { stdio: 'inherit', env });
    if (r.status !== 0) {
      log(`apt-get ${args.join(' ')} failed (exit ${r.status}); using the npm build of ffmpeg for now.`);
      return { binDir: null, installed: false };
    }
  }
  if (!hasPair(DEBIAN_BIN)) {
    log(`apt-get finished but ${DEBIAN_BIN}/ffmpeg or ffprobe is missing; using the npm build of ffmpeg.`);
    return { binDir: null, installed: false };
  }
  log(`installed: ${firstLine(path.join(DEBIAN_BIN, 'ffmpeg'))}`);
  return { binDir: DEBIAN_BIN, installed: true };
}

function hasPair(dir: string): boolean {
  return ['ffmpeg', 'ffprobe'].every((name) => {
    try {
      fs.accessSync(path.join(dir, name), fs.constants.X_OK);
      return true;
    } catch {
      return false;
    }
  });
}

function firstLine(bin: string): string {
  const r = spawnSync(bin, ['-version'], { encoding: 'utf8' });
  return r.status === 0 ? (r.stdout.split('\n')[0] ?? '').trim() : `${bin} -version failed`;
}
