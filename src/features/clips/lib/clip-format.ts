import type { Clip, ClipProbe } from '@shared/clips/clip.schema';

/**
 * Seconds as m:ss.s (h:mm:ss.s past an hour), to the tenth. Rounds down so a
 * time never shows a tenth the video has not reached yet.
 */
export function formatTime(seconds: number): string {
  if (!Number.isFinite(seconds) || seconds < 0) return '–:––.–';
  const tenths = Math.floor(seconds * 10 + 1e-6);
  const h = Math.floor(tenths / 36_000);
  const m = Math.floor((tenths % 36_000) / 600);
  const s = Math.floor((tenths % 600) / 10);
  const t = tenths % 10;
  const ss = `${String(s).padStart(2, '0')}.${t}`;
  return h > 0 ? `${h}:${String(m).padStart(2, '0')}:${ss}` : `${m}:${ss}`;
}

/** The same time in words for screen readers: "1 minute 4.2 seconds". */
export function spokenTime(seconds: number): string {
  const tenths = Math.floor(Math.max(0, seconds) * 10 + 1e-6);
  const m = Math.floor(tenths / 600);
  const s = (tenths % 600) / 10;
  const sec = `${s.toFixed(1)} seconds`;
  return m > 0 ? `${m} minute${m === 1 ? '' : 's'} ${sec}` : sec;
}

/** File size in decimal units (1 MB = 1 000 000 bytes), as file managers show them. */
export function formatBytes(bytes: number): string {
  if (bytes < 1000) return `${bytes} B`;
  const units = ['kB', 'MB', 'GB', 'TB'];
  let value = bytes / 1000;
  let unit = 0;
  while (value >= 1000 && unit < units.length - 1) {
    value /= 1000;
    unit += 1;
  }
  return `${value.toFixed(value < 10 ? 1 : 0)} ${units[unit]}`;
}

/** Width × height as the picture is shown (a 90° rotation swaps them). */
export function formatResolution(probe: ClipProbe): string {
  const turned = Math.abs(probe.rotation) % 180 === 90;
  const [w, h] = turned ? [probe.height, probe.width] : [probe.width, probe.height];
  return `${w}×${h}`;
}

/** Frames per second, trimmed of needless places: 25, 29.97, 59.94. */
export function formatFrameRate(fps: number): string {
  return `${Number(fps.toFixed(3))} fps`;
}

/** Length of one frame in seconds; 1/30 s when the rate is unknown (common practice, no published source). */
export function frameDuration(clip: Pick<Clip, 'probe'>): number {
  const fps = clip.probe?.frameRate;
  return fps && fps > 0 ? 1 / fps : 1 / 30;
}

/** Index of the frame showing at `seconds` (the first frame is 0). */
export function frameIndexAt(seconds: number, fps: number): number {
  return Math.floor(seconds * fps + 1e-6);
}

/** The range a clip shows after trimming, in seconds. */
export function shownRange(clip: Pick<Clip, 'trimInS' | 'trimOutS' | 'probe'>): { from: number; to: number } {
  const duration = clip.probe?.durationS ?? 0;
  return { from: clip.trimInS ?? 0, to: clip.trimOutS ?? duration };
}

/** True when in or out is set. */
export function isTrimmed(clip: Pick<Clip, 'trimInS' | 'trimOutS'>): boolean {
  return clip.trimInS != null || clip.trimOutS != null;
}

/** True while the server still works on the clip, so its status is worth asking about again. */
export function isInProgress(clip: Pick<Clip, 'status'>): boolean {
  return clip.status === 'uploaded' || clip.status === 'processing';
}
