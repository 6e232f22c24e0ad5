import os from 'node:os';

// Every ffmpeg and ffprobe run decodes a file a stranger uploaded, so each one is bounded in
// wall-clock time (killed by us), processor time and address space (rlimits set by prlimit,
// which also hold if the server dies and leaves the process behind). The figures below are
// our own rules of thumb, measured on a two-core machine with Debian's ffmpeg 5.1: a 1080p
// transcode (libx264 veryfast) ran at about real time and needed 1 GiB of address space,
// a 4K HEVC one ran at a third of real time and needed 2 GiB; ffprobe alone maps ~350 MiB.

const MiB = 1024 ** 2;
const CORES = Math.max(1, os.availableParallelism());

/** Wall-clock bound of a command whose work does not grow with the clip: a probe, one picture. */
export const FIXED_TIMEOUT_S = 120;

/** Wall-clock bound of making the web copy of a clip that lasts `durationS` seconds. */
export function transcodeTimeoutS(durationS: number): number {
  return Math.ceil(300 + 6 * Math.max(0, durationS));
}

/** Wall-clock bound of a command that may decode every frame of the clip (the thumbnail strip). */
export function decodeAllTimeoutS(durationS: number): number {
  return Math.ceil(FIXED_TIMEOUT_S + 3 * Math.max(0, durationS));
}

/**
 * Address space one command may map, bytes: 2 GiB plus 256 MiB per core, since ffmpeg starts
 * a decoding and an encoding thread per core and each gets its own stack and malloc arena.
 */
export function memoryLimitBytes(): number {
  return 2048 * MiB + 256 * MiB * CORES;
}

/**
 * Processor seconds (all threads together) one command may use: its wall-clock bound on every
 * core, so it never fires before the timeout while the server lives, and still stops a process
 * the server left behind.
 */
export function cpuLimitSeconds(timeoutS: number): number {
  return Math.ceil(timeoutS * CORES);
}

/**
 * The longest a whole clip job may take: planning, the web copy, the poster (two tries) and the
 * strip (two passes), each at its bound, plus five minutes for storage.
 */
export function clipJobBoundS(durationS: number): number {
  return 300 + FIXED_TIMEOUT_S * 3 + transcodeTimeoutS(durationS) + 2 * decodeAllTimeoutS(durationS);
}
