import { describe, expect, it } from 'vitest';
import { WebVTTParser, type Entity } from 'webvtt-parser';
import htmlEntities from 'webvtt-parser/html-entities.json';
import { chaptersVtt, cuesFromMoments, momentCueText } from '../../../../server/features/clips/media/vtt';

/**
 * Parses with the W3C's webvtt.js (w3c/webvtt.js, the parser of the W3C's online validator).
 * Given the full HTML entity table it ships: its built-in fallback table lacks the trailing ";"
 * and decodes "&gt;" as ">;", unlike browsers.
 */
function parse(text: string) {
  return new WebVTTParser(htmlEntities as Record<Entity, string>).parse(text, 'metadata');
}

describe('chaptersVtt', () => {
  it('writes a WebVTT file that parses without errors, with the cue times given', () => {
    const text = chaptersVtt([
      { startMs: 0, endMs: 1500, text: 'Set-up' },
      { startMs: 1500, endMs: 62_345, text: 'Feeler gauge 0.05 mm' },
      { startMs: 3_723_004, endMs: 3_725_000, text: 'After an hour' },
    ]);
    expect(text.startsWith('WEBVTT\n\n')).toBe(true);
    expect(text).toContain('00:00:01.500 --> 00:01:02.345');
    expect(text).toContain('01:02:03.004 --> 01:02:05.000');
    const { cues, errors } = parse(text);
    expect(errors).toEqual([]);
    expect(cues.map((c) => [c.startTime, c.endTime, c.text])).toEqual([
      [0, 1.5, 'Set-up'],
      [1.5, 62.345, 'Feeler gauge 0.05 mm'],
      [3723.004, 3725, 'After an hour'],
    ]);
  });

  it('escapes text so "-->", "&", "<" and blank lines cannot break a cue or open a tag', () => {
    const hostile = 'gap --> 0.2 mm & <b>tight</b>\n\n00:00:09.000 --> 00:00:10.000\nfake cue';
    const text = chaptersVtt([
      { startMs: 1000, endMs: 2000, text: hostile },
      { startMs: 2000, endMs: 3000, text: 'next' },
    ]);
    const { cues, errors } = parse(text);
    expect(errors).toEqual([]);
    expect(cues).toHaveLength(2);
    expect(cues[0]!.text).toBe('gap --&gt; 0.2 mm &amp; &lt;b&gt;tight&lt;/b&gt; 00:00:09.000 --&gt; 00:00:10.000 fake cue');
    // What a player shows: the entities decoded, no markup.
    expect(cues[0]!.tree.children.map((c) => ('value' in c ? c.value : '')).join('')).toBe(
      'gap --> 0.2 mm & <b>tight</b> 00:00:09.000 --> 00:00:10.000 fake cue',
    );
  });

  it('sorts cues by start, as the format requires', () => {
    const { cues, errors } = parse(
      chaptersVtt([
        { startMs: 5000, endMs: 6000, text: 'b' },
        { startMs: 1000, endMs: 2000, text: 'a' },
      ]),
    );
    expect(errors).toEqual([]);
    expect(cues.map((c) => c.text)).toEqual(['a', 'b']);
  });

  it('refuses a cue that ends before it starts', () => {
    expect(() => chaptersVtt([{ startMs: 2000, endMs: 2000, text: 'x' }])).toThrow(RangeError);
  });

  it('writes just the header when there are no cues', () => {
    expect(parse(chaptersVtt([]))).toMatchObject({ cues: [], errors: [] });
  });
});

describe('cuesFromMoments', () => {
  it('runs each moment to the next, and the last one 5 s or to the end of the clip', () => {
    expect(
      cuesFromMoments(
        [
          { atMs: 4000, label: 'Second' },
          { atMs: 1000, label: 'First' },
          { atMs: 9000, label: 'Last' },
        ],
        12_000,
      ),
    ).toEqual([
      { startMs: 1000, endMs: 4000, text: 'First' },
      { startMs: 4000, endMs: 9000, text: 'Second' },
      { startMs: 9000, endMs: 12_000, text: 'Last' },
    ]);
    expect(cuesFromMoments([{ atMs: 1000, label: 'Only' }], 60_000)).toEqual([{ startMs: 1000, endMs: 6000, text: 'Only' }]);
  });

  it('gives moments at the same time the same span, and names unlabelled ones by time', () => {
    const cues = cuesFromMoments(
      [
        { atMs: 2500, label: '' },
        { atMs: 2500, label: 'Dial reads 0.02' },
        { atMs: 7000, label: 'End' },
      ],
      8000,
    );
    expect(cues).toEqual([
      { startMs: 2500, endMs: 7000, text: 'Moment at 0:02.5' },
      { startMs: 2500, endMs: 7000, text: 'Dial reads 0.02' },
      { startMs: 7000, endMs: 8000, text: 'End' },
    ]);
    expect(parse(chaptersVtt(cues)).errors).toEqual([]);
  });

  it('still gives a moment at the very end of the clip a cue that parses', () => {
    const cues = cuesFromMoments([{ atMs: 8000, label: 'At the end' }], 8000);
    expect(cues).toEqual([{ startMs: 8000, endMs: 13_000, text: 'At the end' }]);
    expect(parse(chaptersVtt(cues)).errors).toEqual([]);
  });
});

describe('momentCueText', () => {
  it('names the readings at a moment with their values, joined with "; ", else keeps the label', () => {
    expect(momentCueText('Pump body on the plate')).toBe('Pump body on the plate');
    expect(momentCueText('Pump body on the plate', [])).toBe('Pump body on the plate');
    expect(momentCueText('ignored', [{ name: 'Bore depth', display: '0.5642 in' }])).toBe('Bore depth: 0.5642 in');
    expect(
      momentCueText('ignored', [
        { name: 'Rotor tip gap', display: '0.0035 in' },
        { name: 'Runout', display: '−0.012 mm' },
      ]),
    ).toBe('Rotor tip gap: 0.0035 in; Runout: −0.012 mm');
  });

  it('keeps the track valid when a reading name holds cue syntax', () => {
    const text = momentCueText('x', [{ name: 'gap --> <b>tight</b>\n\n00:00:09.000 --> 00:00:10.000', display: '0.0035 in' }]);
    const { cues, errors } = parse(chaptersVtt(cuesFromMoments([{ atMs: 1000, label: text }, { atMs: 2000, label: 'next' }], 5000)));
    expect(errors).toEqual([]);
    expect(cues).toHaveLength(2);
    expect(cues[0]!.tree.children.map((c) => ('value' in c ? c.value : '')).join('')).toBe(
      'gap --> <b>tight</b> 00:00:09.000 --> 00:00:10.000: 0.0035 in',
    );
  });
});
