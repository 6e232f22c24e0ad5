import { describe, expect, it } from 'vitest';
import {
  framesPerSecond,
  greySpread,
  meanDifference,
  MIN_SHOWN_MS,
  numberText,
  pgmPixels,
  readSize,
  stillStretches,
  valuesShown,
} from '../../../server/features/speech/display-reader';

/*
 * The pure steps of reading a display: what counts as a number, which frames are one still
 * picture, which stretches are a value shown long enough. The thresholds are our rules (no
 * published source), named in display-reader.ts.
 */

const grey = (level: number, n = 100) => Buffer.alloc(n, level);

describe('numberText', () => {
  it('keeps a display’s number as decimal text, and nothing else', () => {
    expect(numberText('0.5642\n')).toBe('0.5642');
    expect(numberText(' 14.331 ')).toBe('14.331');
    expect(numberText('-3')).toBe('-3');
    expect(numberText('.5')).toBe('0.5');
    expect(numberText('12.')).toBe('12');
    expect(numberText('0,25')).toBe('0.25');
    for (const bad of ['', '-', '_', '8_8', '1.2.3', 'abc', '1e5', '--1', '1234567890123']) expect(numberText(bad), bad).toBeNull();
  });
});

describe('still pictures', () => {
  it('measures how far apart two pictures are on average', () => {
    expect(meanDifference(grey(10), grey(10))).toBe(0);
    expect(meanDifference(grey(10), grey(13))).toBe(3);
    // Pictures of different sizes are never the same.
    expect(meanDifference(grey(10, 4), grey(10, 5))).toBe(255);
  });

  it('cuts frames where the picture changes', () => {
    const frames = [10, 11, 10, 200, 201, 200, 10].map((level, index) => ({ index, pixels: grey(level) }));
    expect(stillStretches(frames).map((s) => s.map((f) => f.index))).toEqual([[0, 1, 2], [3, 4, 5], [6]]);
  });

  it('calls a picture blank when its grey levels barely spread', () => {
    expect(greySpread(grey(40))).toBe(0);
    const digits = Buffer.concat([grey(15, 80), grey(200, 20)]);
    expect(greySpread(digits)).toBe(185);
  });

  it('reads an 8-bit binary PGM as ffmpeg writes it', () => {
    const file = Buffer.concat([Buffer.from('P5\n3 2\n255\n', 'latin1'), Buffer.from([1, 2, 3, 4, 5, 6])]);
    expect([...pgmPixels(file)]).toEqual([1, 2, 3, 4, 5, 6]);
    expect(() => pgmPixels(Buffer.from('P6\n1 1\n255\nabc', 'latin1'))).toThrow(/PGM/);
  });
});

describe('values shown', () => {
  const fps = 10;
  it('keeps a number shown at least half a second, from its first still frame to its last', () => {
    expect(MIN_SHOWN_MS).toBe(500);
    const values = valuesShown(
      [
        { firstIndex: 10, lastIndex: 34, text: '0.5642', confidence: 1 },
        // 0.3 s: changing under the camera.
        { firstIndex: 45, lastIndex: 47, text: '0.9999', confidence: 1 },
        // Exactly 0.5 s.
        { firstIndex: 60, lastIndex: 64, text: '0.5596', confidence: 2 / 3 },
        { firstIndex: 70, lastIndex: 90, text: null, confidence: 0 },
      ],
      fps,
    );
    expect(values).toEqual([
      { startMs: 1000, endMs: 3500, text: '0.5642', confidence: 1 },
      { startMs: 6000, endMs: 6500, text: '0.5596', confidence: 2 / 3 },
    ]);
  });

  it('joins two stretches of the same number a flicker apart', () => {
    const values = valuesShown(
      [
        { firstIndex: 0, lastIndex: 3, text: '65', confidence: 1 },
        { firstIndex: 5, lastIndex: 9, text: '65', confidence: 1 / 3 },
      ],
      fps,
    );
    expect(values).toEqual([{ startMs: 0, endMs: 1000, text: '65', confidence: 1 / 3 }]);
  });
});

describe('frame sampling', () => {
  it('takes ten frames a second up to five minutes, then fewer, never under four', () => {
    expect(framesPerSecond(10)).toBe(10);
    expect(framesPerSecond(300)).toBe(10);
    expect(framesPerSecond(600)).toBe(5);
    expect(framesPerSecond(3600)).toBe(4);
    expect(framesPerSecond(Number.NaN)).toBe(10);
  });

  it('scales the region to 96 pixels high, keeping its shape in the frame', () => {
    // 270 × 130 pixels of a 640 × 360 frame → 199 × 96, made even.
    expect(readSize({ x: 0, y: 0, width: 270 / 640, height: 130 / 360 }, { width: 640, height: 360 })).toEqual({ width: 200, height: 96 });
    // A thin strip (1920 × 54 pixels, 35.6 : 1) is capped at 640 wide: 640 / 35.6 = 18 high.
    expect(readSize({ x: 0, y: 0, width: 1, height: 0.05 }, { width: 1920, height: 1080 })).toEqual({ width: 640, height: 18 });
  });
});
