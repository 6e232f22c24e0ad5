import { describe, expect, it } from 'vitest';
import { applyCorrections } from '@shared/speech/caption-corrections';
import type { CaptionCorrection, ClipWord, TranscriptWord } from '@shared/speech/speech.schema';
import { captionRows, correctionForEdit } from '@/features/clips/lib/caption-rows';
import { captionsTrackUrl } from '@/features/clips/api/caption-queries';

/*
 * The caption editor's lines: the same cues as the captions (at most 7 words and 3.5 s, a new cue
 * after a pause over 0.6 s: our rule of thumb, no published source), marked corrected where a
 * correction lies, and the correction an edit sends so that only the edited line changes.
 */

const heard = (word: string, startMs: number, endMs: number): ClipWord => ({ word, startMs, endMs, confidence: 0.8 });
const HEARD = [heard('feeler', 200, 600), heard('three', 1000, 1300), heard('now', 1350, 1600), heard('slides', 2500, 2900), heard('four', 3000, 3300)];

let nextId = 1;
const correction = (startMs: number, endMs: number, text: string): CaptionCorrection => ({
  id: nextId++,
  startMs,
  endMs,
  text,
  correctedBy: 7,
  updatedAt: new Date(Date.UTC(2026, 11, 10, 9, 0, nextId)).toISOString(),
});

/** The transcript the server sends: the words with the corrections applied, as `{text}`. */
function transcript(corrections: CaptionCorrection[]): TranscriptWord[] {
  return applyCorrections(HEARD, corrections).map(({ word, ...w }) => ({ ...w, text: word }));
}

describe('captionRows', () => {
  it('gives the captions’ cues as heard, none corrected, when there are no corrections', () => {
    const rows = captionRows(transcript([]), []);
    expect(rows.map((r) => [r.startMs, r.endMs, r.text, r.corrections.length])).toEqual([
      [200, 1600, 'feeler three now', 0],
      [2500, 3300, 'slides four', 0],
    ]);
  });

  it('marks the cue a correction lies in as corrected, and only that one', () => {
    const c = correction(1000, 1600, 'three thou');
    const rows = captionRows(transcript([c]), [c]);
    expect(rows.map((r) => [r.text, r.corrections.map((x) => x.id)])).toEqual([
      ['feeler three thou', [c.id]],
      ['slides four', []],
    ]);
  });

  it('gives a line of its own to a span corrected to silence, so it can be undone', () => {
    const c = correction(2400, 2950, '');
    const rows = captionRows(transcript([c]), [c]);
    expect(rows.map((r) => [r.startMs, r.text, r.corrections.map((x) => x.id)])).toEqual([
      [200, 'feeler three now', []],
      [2400, '', [c.id]],
      [3000, 'four', []],
    ]);
  });
});

describe('correctionForEdit', () => {
  it('covers the line’s span with the words typed', () => {
    const words = transcript([]);
    const [first] = captionRows(words, []);
    expect(correctionForEdit(first!, words, 'feeler three thou', 4000)).toEqual({ startMs: 200, endMs: 1600, text: 'feeler three thou' });
  });

  it('takes in the corrections the line shows, keeping their words outside the line', () => {
    // Eight words over 1.0–1.6 s: with "feeler" before them, the 7-word rule splits them over two lines.
    const c = correction(1000, 1600, 'three thou and a half or so more');
    const words = transcript([c]);
    const rows = captionRows(words, [c]);
    expect(rows.map((r) => [r.text, r.corrections.map((x) => x.id)])).toEqual([
      ['feeler three thou and a half or', [c.id]],
      ['so more', [c.id]],
      ['slides four', []],
    ]);
    // Editing the second line sends the whole correction again with only that line's words changed.
    expect(correctionForEdit(rows[1]!, words, 'so, more or less', 4000)).toEqual({
      startMs: 1000,
      endMs: 1600,
      text: 'three thou and a half or so, more or less',
    });
    // Editing the first widens the span to take it in, and keeps the words of the second.
    expect(correctionForEdit(rows[0]!, words, 'feeler three thou and a half', 4000)).toEqual({
      startMs: 200,
      endMs: 1600,
      text: 'feeler three thou and a half so more',
    });
  });

  it('ends no later than the clip', () => {
    const words: TranscriptWord[] = [{ text: 'end', startMs: 3800, endMs: 4050, confidence: 0.5 }];
    const [row] = captionRows(words, []);
    expect(correctionForEdit(row!, words, 'the end', 4000)).toEqual({ startMs: 3800, endMs: 4000, text: 'the end' });
  });
});

describe('captionsTrackUrl', () => {
  it('is the plain address without corrections and changes with each correction saved or undone', () => {
    expect(captionsTrackUrl(5, undefined)).toBe('/api/clips/5/captions.vtt');
    expect(captionsTrackUrl(5, [])).toBe('/api/clips/5/captions.vtt');
    const a = correction(0, 100, 'a');
    const b = correction(200, 300, 'b');
    const one = captionsTrackUrl(5, [a]);
    const two = captionsTrackUrl(5, [a, b]);
    expect(one).toMatch(/^\/api\/clips\/5\/captions\.vtt\?v=/);
    expect(new Set([one, two, captionsTrackUrl(5, [b])]).size).toBe(3);
  });
});
