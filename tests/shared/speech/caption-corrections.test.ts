import { describe, expect, it } from 'vitest';
import { captionCues } from '@shared/speech/caption-cues';
import { applyCorrections, correctionWords, spansOverlap } from '@shared/speech/caption-corrections';
import { captionCorrectionBodySchema } from '@shared/speech/speech.schema';

/*
 * Caption corrections: the builder's words for a span replace the words heard in it. How the
 * corrected words' times are laid out (spread evenly over the span) is our rule (no published
 * source): the builder names the span, not each word's time.
 */

const heard = (word: string, startMs: number, endMs: number, confidence = 0.8) => ({ word, startMs, endMs, confidence });

/** "the gap is three now thou", as a recognizer might hear it, 0.1 s between words. */
const WORDS = [
  heard('the', 0, 200),
  heard('gap', 300, 600),
  heard('is', 700, 800),
  heard('three', 1000, 1300),
  heard('now', 1400, 1700),
  heard('slides', 2500, 2900),
];

describe('spansOverlap', () => {
  it('is true for spans sharing time and false for spans that only touch', () => {
    expect(spansOverlap({ startMs: 0, endMs: 100 }, { startMs: 50, endMs: 150 })).toBe(true);
    expect(spansOverlap({ startMs: 50, endMs: 150 }, { startMs: 0, endMs: 100 })).toBe(true);
    expect(spansOverlap({ startMs: 0, endMs: 1000 }, { startMs: 200, endMs: 300 })).toBe(true);
    expect(spansOverlap({ startMs: 0, endMs: 100 }, { startMs: 100, endMs: 200 })).toBe(false);
    expect(spansOverlap({ startMs: 100, endMs: 200 }, { startMs: 0, endMs: 100 })).toBe(false);
    expect(spansOverlap({ startMs: 0, endMs: 100 }, { startMs: 300, endMs: 400 })).toBe(false);
  });

  it('counts a zero-length span inside another, at its start but not at its end, and at the same instant', () => {
    expect(spansOverlap({ startMs: 50, endMs: 50 }, { startMs: 0, endMs: 100 })).toBe(true);
    expect(spansOverlap({ startMs: 0, endMs: 0 }, { startMs: 0, endMs: 100 })).toBe(true);
    expect(spansOverlap({ startMs: 0, endMs: 100 }, { startMs: 100, endMs: 100 })).toBe(false);
    expect(spansOverlap({ startMs: 7, endMs: 7 }, { startMs: 7, endMs: 7 })).toBe(true);
    expect(spansOverlap({ startMs: 7, endMs: 7 }, { startMs: 8, endMs: 8 })).toBe(false);
  });
});

describe('correctionWords', () => {
  it('splits the text on any whitespace and spreads the words evenly over the span, confidence 1', () => {
    expect(correctionWords({ startMs: 1000, endMs: 1700, text: '  three\tthou\n' })).toEqual([
      { word: 'three', startMs: 1000, endMs: 1350, confidence: 1 },
      { word: 'thou', startMs: 1350, endMs: 1700, confidence: 1 },
    ]);
    // 1000 ms over three words: rounded, with no gaps and no overlaps.
    expect(correctionWords({ startMs: 0, endMs: 1000, text: 'a b c' }).map((w) => [w.startMs, w.endMs])).toEqual([
      [0, 333],
      [333, 667],
      [667, 1000],
    ]);
  });

  it('gives no words for empty text (nothing was said there)', () => {
    expect(correctionWords({ startMs: 0, endMs: 1000, text: '' })).toEqual([]);
    expect(correctionWords({ startMs: 0, endMs: 1000, text: '   ' })).toEqual([]);
  });
});

describe('applyCorrections', () => {
  it('leaves the words as they are when there are no corrections', () => {
    expect(applyCorrections(WORDS, [])).toEqual(WORDS);
  });

  it('replaces the words overlapping a correction by its words, in time order among the others', () => {
    const out = applyCorrections(WORDS, [{ startMs: 1000, endMs: 1700, text: 'three thou' }]);
    expect(out.map((w) => w.word)).toEqual(['the', 'gap', 'is', 'three', 'thou', 'slides']);
    expect(out[3]).toEqual({ word: 'three', startMs: 1000, endMs: 1350, confidence: 1 });
    expect(out[4]).toEqual({ word: 'thou', startMs: 1350, endMs: 1700, confidence: 1 });
    // Words outside the span keep their times and confidence.
    expect(out[5]).toEqual(WORDS[5]);
  });

  it('replaces a word the span only partly covers, and not one that only touches it', () => {
    // 1200–1400 cuts into "three" (1000–1300) and touches "now" (1400–1700) at its start.
    const out = applyCorrections(WORDS, [{ startMs: 1200, endMs: 1400, text: 'four' }]);
    expect(out.map((w) => w.word)).toEqual(['the', 'gap', 'is', 'four', 'now', 'slides']);
  });

  it('removes the words heard when nothing was said there', () => {
    const out = applyCorrections(WORDS, [{ startMs: 2400, endMs: 3000, text: '' }]);
    expect(out.map((w) => w.word)).toEqual(['the', 'gap', 'is', 'three', 'now']);
  });

  it('puts words where nothing was heard, and applies several corrections at once', () => {
    const out = applyCorrections(WORDS, [
      { startMs: 3000, endMs: 3600, text: 'four stops' },
      { startMs: 0, endMs: 800, text: 'end float' },
    ]);
    expect(out.map((w) => w.word)).toEqual(['end', 'float', 'three', 'now', 'slides', 'four', 'stops']);
  });

  it('lets the later of two overlapping corrections win', () => {
    const out = applyCorrections(WORDS, [
      { startMs: 900, endMs: 1800, text: 'first try' },
      { startMs: 1000, endMs: 1700, text: 'three thou' },
    ]);
    expect(out.map((w) => w.word)).toEqual(['the', 'gap', 'is', 'three', 'thou', 'slides']);
  });

  it('gives the captions the corrected words: one cue shows “three thou” where “three now” was heard', () => {
    expect(captionCues(WORDS).map((c) => c.text)).toEqual(['the gap is three now', 'slides']);
    const cues = captionCues(applyCorrections(WORDS, [{ startMs: 1000, endMs: 1700, text: 'three thou' }]));
    expect(cues.map((c) => c.text)).toEqual(['the gap is three thou', 'slides']);
  });
});

describe('the body of a new caption correction', () => {
  const parse = (body: unknown) => captionCorrectionBodySchema.safeParse(body);

  it('takes a span and its words on one line, trimmed, and empty text for “nothing was said here”', () => {
    expect(parse({ startMs: 1000, endMs: 1700, text: '  three \n thou ' })).toMatchObject({ success: true, data: { text: 'three thou' } });
    expect(parse({ startMs: 1000, endMs: 1000, text: '' }).success).toBe(true);
    expect(parse({ startMs: 0, endMs: 60_000, text: 'a minute of talk' }).success).toBe(true);
  });

  it('refuses an end before the start, a span over 60 s, text over 500 characters and unknown fields', () => {
    const paths = (body: unknown) => parse(body).error?.issues.map((i) => i.path.join('.'));
    expect(paths({ startMs: 1000, endMs: 999, text: 'x' })).toEqual(['endMs']);
    expect(paths({ startMs: 0, endMs: 60_001, text: 'x' })).toEqual(['endMs']);
    expect(paths({ startMs: 0, endMs: 100, text: 'x'.repeat(501) })).toEqual(['text']);
    expect(parse({ startMs: 0, endMs: 100, text: 'x'.repeat(500) }).success).toBe(true);
    expect(paths({ startMs: -1, endMs: 100, text: 'x' })).toEqual(['startMs']);
    expect(paths({ startMs: 0.5, endMs: 100, text: 'x' })).toEqual(['startMs']);
    expect(paths({ startMs: 0, endMs: 100, text: 'a\u0000b' })).toEqual(['text']);
    expect(parse({ startMs: 0, endMs: 100, text: 'x', by: 1 }).success).toBe(false);
  });
});
