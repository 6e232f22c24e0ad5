import { spawnSync } from 'node:child_process';
import fs from 'node:fs';
import { createRequire } from 'node:module';
import path from 'node:path';

const require = createRequire(import.meta.url);

/** Where the ffmpeg in use comes from: the operating system's package, or the npm package. */
export type MediaBinarySource = 'system' | 'packaged';

/** The ffmpeg/ffprobe pair every media command runs, and what it is. */
export interface MediaBinaries {
  /** Executable path (or a bare name looked up on PATH). */
  ffmpeg: string;
  ffprobe: string;
  source: MediaBinarySource;
  /** First line of `ffmpeg -version` ("ffmpeg version 5.1.6-0+deb12u1 Copyright …"); null when it did not run. */
  version: string | null;
}

/** Where Debian's `ffmpeg` package installs the pair. */
export const SYSTEM_BIN_DIR = '/usr/bin';

let resolved: MediaBinaries | null = null;

/**
 * The ffmpeg and ffprobe every media command runs, resolved once per process: Debian's
 * (`/usr/bin`, kept current by the distribution's security updates; `npm start` and `npm test`
 * install it when missing), else the static build shipped in npm (an old build with no
 * security fixes, kept only so a machine without the package still works), else whatever
 * `ffmpeg`/`ffprobe` PATH finds.
 */
export function mediaBinaries(): MediaBinaries {
  resolved ??= resolveMediaBinaries();
  return resolved;
}

/** How mediaBinaries chooses; the folders are parameters so both branches can be tried. */
export function resolveMediaBinaries(options: { systemDir?: string; packaged?: () => { ffmpeg: string; ffprobe: string } | null } = {}): MediaBinaries {
  const systemDir = options.systemDir ?? SYSTEM_BIN_DIR;
  const system = { ffmpeg: path.join(systemDir, 'ffmpeg'), ffprobe: path.join(systemDir, 'ffprobe') };
  if (isExecutable(system.ffmpeg) && isExecutable(system.ffprobe)) {
    const version = versionLine(system.ffmpeg);
    if (version) return { ...system, source: 'system', version };
  }
  const npm = (options.packaged ?? packagedPair)();
  if (npm) return { ...npm, source: 'packaged', version: versionLine(npm.ffmpeg) };
  return { ffmpeg: 'ffmpeg', ffprobe: 'ffprobe', source: 'system', version: versionLine('ffmpeg') };
}

function packagedPair(): { ffmpeg: string; ffprobe: string } | null {
  const ffmpeg = packaged('@ffmpeg-installer/ffmpeg');
  const ffprobe = packaged('@ffprobe-installer/ffprobe');
  return ffmpeg && ffprobe ? { ffmpeg, ffprobe } : null;
}

function versionLine(bin: string): string | null {
  const r = spawnSync(bin, ['-version'], { encoding: 'utf8', timeout: 10_000 });
  const line = r.status === 0 ? r.stdout.split('\n')[0]?.trim() : '';
  return line || null;
}

function packaged(name: string): string | null {
  let file: string;
  try {
    // The installer packages throw (a string, not an Error) when their platform binary is absent.
    file = (require(name) as { path: string }).path;
  } catch {
    return null;
  }
  return makeExecutable(file) ? file : null;
}

function isExecutable(file: string): boolean {
  try {
    fs.accessSync(file, fs.constants.X_OK);
    return true;
  } catch {
    return false;
  }
}

function makeExecutable(file: string): boolean {
  if (isExecutable(file)) return true;
  try {
    // npm sometimes unpacks these without execute bits for other users.
    fs.chmodSync(file, fs.statSync(file).mode | 0o111);
    return isExecutable(file);
  } catch {
    return false;
  }
}
