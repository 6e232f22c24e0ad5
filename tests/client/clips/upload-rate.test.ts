import { describe, expect, it } from 'vitest';
import { addSample, formatSpeed, formatTimeLeft, uploadRate, RATE_WINDOW_MS, type RateSample } from '@/features/clips/lib/upload-rate';
import { stoppedAt } from '@/features/clips/api/use-clip-uploads';

/** Samples of an upload going at `bytesPerSecond`, one every `stepMs`, from `startMs` and `startBytes`. */
function steady(bytesPerSecond: number, count: number, stepMs = 500, startMs = 0, startBytes = 0): RateSample[] {
  let window: RateSample[] = [];
  for (let i = 0; i < count; i += 1) {
    window = addSample(window, { atMs: startMs + i * stepMs, bytes: startBytes + (bytesPerSecond * i * stepMs) / 1000 });
  }
  return window;
}

describe('the pace and time left of an upload', () => {
  it('is not guessed from less than a second of progress', () => {
    expect(uploadRate(steady(2_000_000, 2), 1e9)).toEqual({ bytesPerSecond: null, secondsLeft: null });
  });

  it('at a steady 2 MB/s, 100 MB left takes 50 s (arithmetic)', () => {
    const samples = steady(2_000_000, 10);
    const last = samples[samples.length - 1]!;
    const rate = uploadRate(samples, last.bytes + 100_000_000);
    expect(rate.bytesPerSecond).toBeCloseTo(2_000_000, 6);
    expect(rate.secondsLeft).toBeCloseTo(50, 6);
  });

  it('follows a change of pace within the window: old samples fall out', () => {
    let samples = steady(4_000_000, 30);
    const last = samples[samples.length - 1]!;
    for (let i = 1; i <= 30; i += 1) samples = addSample(samples, { atMs: last.atMs + i * 500, bytes: last.bytes + i * 500_000 * 0.5 });
    expect(samples[samples.length - 1]!.atMs - samples[0]!.atMs).toBeLessThanOrEqual(RATE_WINDOW_MS);
    // Now 250 kB every 500 ms: 500 kB/s.
    expect(uploadRate(samples, 1e9).bytesPerSecond).toBeCloseTo(500_000, 6);
  });

  it('starts again after a resume from an earlier offset, never showing a negative pace', () => {
    const before = steady(1_000_000, 10, 500, 0, 40_000_000);
    const after = addSample(before, { atMs: 6000, bytes: 32_000_000 });
    expect(after).toEqual([{ atMs: 6000, bytes: 32_000_000 }]);
    expect(uploadRate(after, 1e8).bytesPerSecond).toBeNull();
  });

  it('with no progress at all over the window, has no time left to offer', () => {
    const stuck = [0, 500, 1000, 1500].reduce<RateSample[]>((w, atMs) => addSample(w, { atMs, bytes: 5000 }), []);
    expect(uploadRate(stuck, 10_000)).toEqual({ bytesPerSecond: 0, secondsLeft: null });
  });

  it('reads as people say it', () => {
    expect(formatSpeed(2_400_000)).toBe('2.4 MB/s');
    expect(formatSpeed(850)).toBe('850 B/s');
    expect(formatTimeLeft(4)).toBe('a few seconds left');
    expect(formatTimeLeft(42)).toBe('about 50 s left');
    expect(formatTimeLeft(180)).toBe('about 3 min left');
    expect(formatTimeLeft(2 * 3600 + 5 * 60)).toBe('about 2 h 5 min left');
    expect(stoppedAt(400, 1000)).toBe('The upload stopped at 40 %; it will resume when the connection returns.');
  });
});
