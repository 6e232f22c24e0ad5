import fs from 'node:fs';
import { createRequire } from 'node:module';
import ffmpeg from 'fluent-ffmpeg';

const require = createRequire(import.meta.url);

/** Executable paths (or bare names looked up on PATH). */
export interface MediaBinaries {
  ffmpeg: string;
  ffprobe: string;
}

let resolved: MediaBinaries | null = null;

/**
 * Paths of ffmpeg and ffprobe: the binaries shipped in npm packages (so every machine runs the
 * same build), else `ffmpeg`/`ffprobe` from PATH. Resolved once; fluent-ffmpeg is pointed at
 * the same pair so any code using it runs the same binaries.
 */
export function mediaBinaries(): MediaBinaries {
  if (!resolved) {
    resolved = {
      ffmpeg: packaged('@ffmpeg-installer/ffmpeg') ?? 'ffmpeg',
      ffprobe: packaged('@ffprobe-installer/ffprobe') ?? 'ffprobe',
    };
    ffmpeg.setFfmpegPath(resolved.ffmpeg);
    ffmpeg.setFfprobePath(resolved.ffprobe);
  }
  return resolved;
}

function packaged(name: string): string | null {
  let file: string;
  try {
    // The installer packages throw (a string, not an Error) when their platform binary is absent.
    file = (require(name) as { path: string }).path;
  } catch {
    return null;
  }
  return executable(file) ? file : null;
}

function executable(file: string): boolean {
  try {
    fs.accessSync(file, fs.constants.X_OK);
    return true;
  } catch {
    // npm sometimes unpacks these without execute bits for other users.
  }
  try {
    fs.chmodSync(file, fs.statSync(file).mode | 0o111);
    fs.accessSync(file, fs.constants.X_OK);
    return true;
  } catch {
    return false;
  }
}
