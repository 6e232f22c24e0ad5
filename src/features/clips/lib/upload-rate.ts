/** One reading of an upload's progress: bytes the server has, at a time in ms. */
export interface RateSample {
  atMs: number;
  bytes: number;
}

/** How fast an upload goes over its last few seconds, and how long the rest will take at that pace. */
export interface UploadRate {
  /** Bytes per second over the window; null until there is enough to tell. */
  bytesPerSecond: number | null;
  /** Seconds until the last byte at that pace; null when the pace is not known (or nil). */
  secondsLeft: number | null;
}

/** The window the pace is taken over: long enough to smooth Wi-Fi's bursts, short enough to follow a change. */
export const RATE_WINDOW_MS = 8000;
/** Less than this much time in the window tells nothing yet. */
const MIN_SPAN_MS = 1000;

/**
 * Adds a sample to a window of samples (returns a new array, oldest first, at most
 * `RATE_WINDOW_MS` long). A drop in bytes (the upload went back to an earlier offset after a
 * cut) starts the window again, so a resume never counts as negative speed.
 */
export function addSample(samples: readonly RateSample[], sample: RateSample): RateSample[] {
  const last = samples[samples.length - 1];
  if (last && (sample.bytes < last.bytes || sample.atMs < last.atMs)) return [sample];
  const kept = samples.filter((s) => sample.atMs - s.atMs <= RATE_WINDOW_MS);
  return [...kept, sample];
}

/** The pace over the window and the time left for `total` bytes. */
export function uploadRate(samples: readonly RateSample[], total: number): UploadRate {
  const first = samples[0];
  const last = samples[samples.length - 1];
  if (!first || !last || last.atMs - first.atMs < MIN_SPAN_MS) return { bytesPerSecond: null, secondsLeft: null };
  const bytesPerSecond = ((last.bytes - first.bytes) * 1000) / (last.atMs - first.atMs);
  if (!(bytesPerSecond > 0)) return { bytesPerSecond: 0, secondsLeft: null };
  return { bytesPerSecond, secondsLeft: Math.max(0, (total - last.bytes) / bytesPerSecond) };
}

/** "2.4 MB/s", in the decimal units file managers use. */
export function formatSpeed(bytesPerSecond: number): string {
  if (bytesPerSecond < 1000) return `${Math.round(bytesPerSecond)} B/s`;
  const units = ['kB/s', 'MB/s', 'GB/s'];
  let value = bytesPerSecond / 1000;
  let unit = 0;
  while (value >= 1000 && unit < units.length - 1) {
    value /= 1000;
    unit += 1;
  }
  return `${value.toFixed(value < 10 ? 1 : 0)} ${units[unit]}`;
}

/** "about 3 min left", rounded the way people say it: seconds under a minute, then minutes, then hours and minutes. */
export function formatTimeLeft(seconds: number): string {
  if (seconds < 10) return 'a few seconds left';
  if (seconds < 60) return `about ${Math.ceil(seconds / 10) * 10} s left`;
  const minutes = Math.round(seconds / 60);
  if (minutes < 60) return `about ${minutes} min left`;
  const h = Math.floor(minutes / 60);
  const m = minutes % 60;
  return m === 0 ? `about ${h} h left` : `about ${h} h ${m} min left`;
}
