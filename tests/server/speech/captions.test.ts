import { describe, expect, it } from 'vitest';
import { WebVTTParser, type Entity } from 'webvtt-parser';
import htmlEntities from 'webvtt-parser/html-entities.json';
import { captionCues, captionsVtt, cleanWord } from '../../../server/features/speech/captions';

/**
 * Captions are checked against the W3C WebVTT syntax with the W3C's own parser (w3c/webvtt.js,
 * the parser behind the W3C's validator): a file starts with "WEBVTT", each cue has a timing line
 * `hh:mm:ss.ttt --> hh:mm:ss.ttt` (W3C WebVTT 1.0, 4.1 "WebVTT file structure" and 4.2 "WebVTT
 * cue timings"), cue start times never go back. How cues are cut (at most 7 words and 3.5 s, a
 * new cue after a pause over 0.6 s) is our rule of thumb (no published source).
 */
function parse(text: string) {
  return new WebVTTParser(htmlEntities as Record<Entity, string>).parse(text, 'subtitles');
}

/** Words `gap` ms apart, each `length` ms long, from `from` ms. */
function spoken(text: string, from = 0, length = 300, gap = 100) {
  return text.split(' ').map((word, i) => ({ word, startMs: from + i * (length + gap), endMs: from + i * (length + gap) + length }));
}

const TIMING_LINE = /^\d{2,}:[0-5]\d:[0-5]\d\.\d{3} --> \d{2,}:[0-5]\d:[0-5]\d\.\d{3}$/;

describe('captionsVtt', () => {
  it('writes a WebVTT file the W3C parser reads without errors, one cue per phrase, times as hh:mm:ss.ttt', () => {
    const words = [
      { word: 'the', startMs: 150, endMs: 250 },
      { word: 'depth', startMs: 260, endMs: 520 },
      { word: 'reads', startMs: 530, endMs: 1010 },
      // A pause of 1.04 s: a new cue.
      { word: 'five', startMs: 2050, endMs: 2390 },
      { word: 'hundred', startMs: 2400, endMs: 2820 },
      { word: 'sixty', startMs: 2830, endMs: 3320 },
      { word: 'four', startMs: 3330, endMs: 3630 },
    ];
    const text = captionsVtt(words);
    expect(text.split('\n')[0]).toBe('WEBVTT');
    expect(text).toContain('00:00:00.150 --> 00:00:01.010');
    expect(text).toContain('00:00:02.050 --> 00:00:03.630');
    for (const line of text.split('\n').filter((l) => l.includes('-->'))) expect(line).toMatch(TIMING_LINE);
    const { cues, errors } = parse(text);
    expect(errors).toEqual([]);
    expect(cues.map((c) => [c.startTime, c.endTime, c.text])).toEqual([
      [0.15, 1.01, 'the depth reads'],
      [2.05, 3.63, 'five hundred sixty four'],
    ]);
  });

  it('is a valid file with no cues when nothing was heard', () => {
    const text = captionsVtt([]);
    expect(text).toBe('WEBVTT\n');
    const { cues, errors } = parse(text);
    expect(errors).toEqual([]);
    expect(cues).toEqual([]);
  });

  it('puts at most seven words in a cue', () => {
    const cues = captionCues(spoken('one two three four five six seven eight nine ten', 0, 200, 50));
    expect(cues.map((c) => c.text)).toEqual(['one two three four five six seven', 'eight nine ten']);
  });

  it('keeps a cue within 3.5 s, from its first word’s start to its last word’s end', () => {
    // Slow words, 0.9 s each with 0.2 s between: the fourth would end the cue at 4.2 s.
    const cues = captionCues(spoken('bore depth as supplied after honing', 0, 900, 200));
    expect(cues.map((c) => [c.startMs, c.endMs, c.text])).toEqual([
      [0, 3100, 'bore depth as'],
      [3300, 6400, 'supplied after honing'],
    ]);
    for (const c of cues) expect(c.endMs - c.startMs).toBeLessThanOrEqual(3500);
  });

  it('starts a new cue after a pause of more than 0.6 s, and not after one of exactly 0.6 s', () => {
    const words = [
      { word: 'three', startMs: 0, endMs: 300 },
      { word: 'thou', startMs: 900, endMs: 1200 },
      { word: 'slides', startMs: 1801, endMs: 2100 },
    ];
    expect(captionCues(words).map((c) => c.text)).toEqual(['three thou', 'slides']);
  });

  it('gives cues in time order that never overlap, and hours past the first', () => {
    const words = [
      { word: 'later', startMs: 3_723_004, endMs: 3_723_500 },
      { word: 'earlier', startMs: 1000, endMs: 1400 },
      // Overlapping times from a recognizer: still one cue after another.
      { word: 'overlap', startMs: 1300, endMs: 1350 },
    ];
    const text = captionsVtt(words);
    expect(text).toContain('01:02:03.004 --> 01:02:03.500');
    const { cues, errors } = parse(text);
    expect(errors).toEqual([]);
    for (let i = 1; i < cues.length; i++) expect(cues[i]!.startTime).toBeGreaterThanOrEqual(cues[i - 1]!.endTime);
  });

  it('escapes words so they can neither open a tag nor end a cue', () => {
    const { cues, errors } = parse(captionsVtt([{ word: '<b>-->', startMs: 0, endMs: 500 }]));
    expect(errors).toEqual([]);
    expect(cues[0]!.text).toBe('&lt;b&gt;--&gt;');
  });
});

describe('what readers are shown of a recognizer’s words', () => {
  it('drops pocketsphinx’s markers and its alternates’ numbers', () => {
    expect(['<s>', '</s>', '<sil>', '[NOISE]', '++BREATH++', 'hundred(4)', 'and(2)', 'five'].map(cleanWord)).toEqual([
      null, null, null, null, null, 'hundred', 'and', 'five',
    ]);
  });
});
