import { describe, expect, it } from 'vitest';
import { Fraction, fractionToExactText } from '../../../shared/measure/exact';
import { convertExact } from '../../../shared/measure/quantities';
import {
  clipTime,
  figuresNear,
  HEARD_WINDOW_MS,
  heardWitness,
  type HeardWord,
  type WitnessReading,
} from '../../../shared/review/heard';

/*
 * The second witness: what the clip's sound says near a reading's moment, set beside the figure
 * logged. The window (4 s either side of the moment) and "agrees within half a step of the last
 * digit of either figure, or of the instrument's resolution" are our rule, common practice (no
 * published source). Unit factors are exact, NIST SP 811 (2008) appendix B.8: 1 in = 25.4 mm,
 * 1 thou = 0.001 in; "five hundred sixty four and two tenths" is 564.2 thou as the trade says it
 * (common practice, no published source).
 */

/** Words said one after another from `atMs`, 300 ms apart, each 250 ms long. */
function said(text: string, atMs: number, confidence = 0.9): HeardWord[] {
  return text.split(' ').map((word, i) => ({ word, startMs: atMs + i * 300, endMs: atMs + i * 300 + 250, confidence }));
}

const depth: WitnessReading = { kind: 'direct', unit: 'in', value: '0.5642', passes: null, stops: null, values: null, atMs: 7_900, resolution: '0.0001' };
const ready = (...words: HeardWord[][]) => ({ state: 'ready' as const, words: words.flat() });

describe('a figure said near the moment', () => {
  it('agrees when the thou and tenths said are the inches logged', () => {
    const w = heardWitness(depth, ready(said('the depth reads five hundred sixty four and two tenths', 7_000)));
    expect(w.state).toBe('agrees');
    expect(w.figure).toEqual({ value: '564.2', unit: 'thou' });
    // "five" is the fourth word: 7000 + 3 × 300 ms.
    expect(w.atMs).toBe(7_900);
    expect(w.text).toBe('heard ‘five hundred sixty four and two tenths’ at 0:07.9 → 564.2 thou = 0.5642 in: agrees with the logged 0.5642 in');
  });

  it('agrees when millimetres said convert to within half a step of their last digit: 14.33 mm = 0.56417… in beside 0.5642 in', () => {
    // NIST SP 811 B.8: 1 in = 25.4 mm exactly, so 14.33 mm = 14.33 / 25.4 in = 0.564173… in, and
    // 0.5642 in = 14.33068 mm: 0.00068 mm apart, within 0.005 mm (half a step of 14.33's last digit).
    expect(fractionToExactText(convertExact(new Fraction('0.5642'), 'in', 'mm'))).toBe('14.33068');
    const w = heardWitness(depth, ready(said('fourteen point three three millimetres', 6_500)));
    expect(w.state).toBe('agrees');
    expect(w.figure).toEqual({ value: '14.33', unit: 'mm' });
    // The converted figure keeps the places 14.33 mm supports (NIST SP 811 B.7.2): 0.01 mm ≈ 0.0004 in → 4 places.
    expect(w.text).toBe('heard ‘fourteen point three three millimetres’ at 0:06.5 → 14.33 mm = 0.5642 in: agrees with the logged 0.5642 in');
  });

  it('disagrees when the figure said is a tenth off the one logged, and names it', () => {
    const height: WitnessReading = { ...depth, value: '0.5595', atMs: 1_500 };
    const w = heardWitness(height, ready(said('hmm point five five nine four', 1_200)));
    // 0.5594 in vs 0.5595 in: 0.0001 in apart, more than half a step (0.00005 in) of either figure and half the resolution.
    expect(w.state).toBe('disagrees');
    expect(w.figure).toEqual({ value: '0.5594', unit: 'in' });
    expect(w.text).toBe('heard ‘point five five nine four’ (no unit said) at 0:01.5 → 0.5594 in: disagrees with the logged 0.5595 in');
  });

  it('names the closest in value of several figures when none agrees', () => {
    const w = heardWitness(depth, ready(said('five hundred sixty two thou', 5_000), said('point five six two four', 9_000)));
    expect(w.state).toBe('disagrees');
    expect(w.figure).toEqual({ value: '0.5624', unit: 'in' });
    expect(w.text).toContain('→ 0.5624 in (the closest of 2 figures heard): disagrees with the logged 0.5642 in');
  });

  it('picks an agreeing figure over a closer-in-time one that disagrees', () => {
    const w = heardWitness(depth, ready(said('point five five nine four', 7_900), said('point five six four two', 10_500)));
    expect(w.state).toBe('agrees');
    expect(w.figure).toEqual({ value: '0.5642', unit: 'in' });
  });

  it('lets a coarse spoken figure agree within its own half step: "fourteen point three millimetres" is 14.25–14.35 mm', () => {
    expect(heardWitness(depth, ready(said('fourteen point three millimetres', 8_000))).state).toBe('agrees');
    // 14.4 mm is 14.35–14.45 mm; 0.5642 in = 14.33068 mm is outside it.
    expect(heardWitness(depth, ready(said('fourteen point four millimetres', 8_000))).state).toBe('disagrees');
  });

  it('allows half the instrument’s resolution when it is coarser than the figure logged', () => {
    const dial: WitnessReading = { ...depth, value: '0.5642', resolution: '0.001' };
    // 0.5645 in is 0.0003 in off: within 0.0005 in (half of 0.001 in), not within half a step of either figure.
    expect(heardWitness(dial, ready(said('point five six four five inches', 8_000))).state).toBe('agrees');
    expect(heardWitness(depth, ready(said('point five six four five inches', 8_000))).state).toBe('disagrees');
  });
});

describe('the window around the moment', () => {
  it('counts a figure whose words overlap the 4 s either side of the moment, and nothing beyond', () => {
    expect(HEARD_WINDOW_MS).toEqual({ before: 4000, after: 4000 });
    // The window is 3 900–11 900 ms. Said from 2 500 ms, "tenths" is at 4 300–4 550 ms: the figure overlaps it.
    expect(heardWitness(depth, ready(said('five hundred sixty four and two tenths', 2_500))).state).toBe('agrees');
    // Said from 1 000 ms, it ends at 1 000 + 6 × 300 + 250 = 3 050 ms, before the window opens.
    const before = heardWitness(depth, ready(said('five hundred sixty four and two tenths', 1_000)));
    expect(before.state).toBe('nothing-heard');
    expect(before.text).toBe('nothing heard near this moment: no length was said between 0:03.9 and 0:11.9');
    // Starting at 12 000 ms is after the window closes; at 11 900 ms it is just inside.
    expect(heardWitness(depth, ready(said('five hundred sixty four and two tenths', 12_000))).state).toBe('nothing-heard');
    expect(heardWitness(depth, ready(said('five hundred sixty four and two tenths', 11_900))).state).toBe('agrees');
  });

  it('says nothing was heard when only talk or figures of another quantity were said', () => {
    const w = heardWitness(depth, ready(said('thirty five foot pounds on cylinder one', 7_000)));
    expect(w).toEqual({ state: 'nothing-heard', text: 'nothing heard near this moment: no length was said between 0:03.9 and 0:11.9' });
    expect(heardWitness(depth, ready([])).state).toBe('nothing-heard');
  });

  it('reads a figure whole when its words begin before the window', () => {
    // "five hundred" at 2.9–3.4 s, "sixty four and two tenths" inside: the whole figure, not "sixty four and two tenths".
    const figures = figuresNear(depth, said('five hundred sixty four and two tenths', 2_900));
    expect(figures.map((f) => f.kind === 'value' && f.value)).toEqual(['564.2']);
  });
});

describe('a clip not listened to', () => {
  it('says so, whatever the reason', () => {
    expect(heardWitness(depth, { state: 'pending' })).toEqual({ state: 'not-listened', text: 'not listened to yet: the clip is waiting its turn to be listened to' });
    expect(heardWitness(depth, { state: 'listening' }).state).toBe('not-listened');
    expect(heardWitness(depth, { state: 'failed' }).text).toBe('not listened to: listening to the clip failed');
    expect(heardWitness(depth, { state: 'unavailable' }).text).toBe('not listened to: this server has no speech recognizer');
  });
});

describe('other kinds and quantities', () => {
  const bracket: WitnessReading = { kind: 'bracket', unit: 'in', value: null, passes: '0.004', stops: '0.005', values: null, atMs: 3_800 };

  it('a feeler bracket agrees when a bracket said agrees on both blades', () => {
    const w = heardWitness(bracket, ready(said("four thou slides five thou won't go", 3_000)));
    expect(w.state).toBe('agrees');
    expect(w.figure).toEqual({ passes: '4', stops: '5', unit: 'thou' });
    expect(w.text).toBe("heard ‘four thou slides five thou won't go’ at 0:03.0 → 4–5 thou = 0.004–0.005 in: agrees with the logged 0.004–0.005 in");
  });

  it('a feeler bracket disagrees with a bracket one blade off', () => {
    const w = heardWitness(bracket, ready(said("three thou slides four thou won't go", 3_000)));
    expect(w.state).toBe('disagrees');
    expect(w.text).toContain('→ 3–4 thou = 0.003–0.004 in: disagrees with the logged 0.004–0.005 in');
  });

  it('a feeler bracket agrees with two blades said apart, one that goes and one that does not', () => {
    const w = heardWitness(bracket, ready(said('four thou slides', 1_000), said("five thou won't go", 6_000)));
    expect(w.state).toBe('agrees');
    expect(w.figure).toEqual({ passes: '4', stops: '5', unit: 'thou' });
    expect(w.text).toContain('agree with the logged 0.004–0.005 in');
  });

  it('a single blade that matches one side of a bracket is not the bracket', () => {
    expect(heardWitness(bracket, ready(said('four thou slides', 3_000))).state).toBe('disagrees');
  });

  it('a bracket is set only against blade talk, a direct reading only against values', () => {
    const plain = heardWitness(bracket, ready(said('point five six four two inches', 3_000)));
    expect(plain).toEqual({ state: 'nothing-heard', text: 'nothing heard near this moment: no feeler blade was said between 0:00.0 and 0:07.8' });
    expect(heardWitness(depth, ready(said("four thou slides five thou won't go", 7_000))).state).toBe('nothing-heard');
  });

  it('a repeated reading agrees when a figure said is one of its values', () => {
    const repeated: WitnessReading = { kind: 'repeated', unit: 'mm', value: null, passes: null, stops: null, values: ['14.331', '14.333', '14.332'], atMs: 2_000 };
    const w = heardWitness(repeated, ready(said('fourteen point three three three millimetres', 1_000)));
    expect(w.state).toBe('agrees');
    expect(w.text).toBe('heard ‘fourteen point three three three millimetres’ at 0:01.0 → 14.333 mm: agrees with the logged 14.333 mm (one of its 3 values)');
  });

  it('reads torque in the reading’s quantity: bare "pounds" beside a torque reading is lbf·ft', () => {
    const torque: WitnessReading = { kind: 'direct', unit: 'lbf_ft', value: '35', passes: null, stops: null, values: null, atMs: 500, resolution: '1' };
    expect(heardWitness(torque, ready(said('thirty five foot pounds', 0))).state).toBe('agrees');
    expect(heardWitness(torque, ready(said('thirty five pounds', 0))).figure).toEqual({ value: '35', unit: 'lbf_ft' });
    expect(heardWitness(torque, ready(said('forty five foot pounds', 0))).text).toBe(
      'heard ‘forty five foot pounds’ at 0:00.0 → 45 lbf·ft: disagrees with the logged 35 lbf·ft',
    );
    // 47.5 N·m = 35.034 lbf·ft (NIST SP 811 B.8: 1 lbf·ft = 1.355 818 N·m), 0.034 lbf·ft off: within half a
    // step of 47.5 (0.05 N·m ≈ 0.037 lbf·ft) and within half the wrench's resolution (0.5 lbf·ft).
    expect(heardWitness(torque, ready(said('forty seven point five newton metres', 0))).state).toBe('agrees');
  });

  it('converts temperatures with their offsets: 68 °F is 20 °C', () => {
    const temp: WitnessReading = { kind: 'direct', unit: 'degC', value: '20', passes: null, stops: null, values: null, atMs: 1_000 };
    // 68 °F = (68 − 32) × 5/9 °C = 20 °C exactly (NIST SP 811 B.8).
    expect(heardWitness(temp, ready(said('sixty eight degrees fahrenheit', 0))).state).toBe('agrees');
  });
});

describe('clipTime', () => {
  it('writes minutes, seconds and tenths as the clip player does', () => {
    expect(clipTime(0)).toBe('0:00.0');
    expect(clipTime(478_900)).toBe('7:58.9');
    expect(clipTime(3_723_400)).toBe('1:02:03.4');
  });
});

describe('a figure shown on the display near the moment', () => {
  const withDisplay = (shown: { startMs: number; endMs: number; text: string; unit: 'in' | 'mm' | 'cc' }[], ...words: HeardWord[][]) => ({
    state: 'ready' as const,
    words: words.flat(),
    shown: shown.map((s) => ({ ...s, confidence: 1 })),
  });

  it('agrees when the display showed the figure logged, and says it was read, not heard', () => {
    const w = heardWitness(depth, withDisplay([{ startMs: 6_900, endMs: 9_900, text: '0.5642', unit: 'in' }]));
    expect(w).toMatchObject({ state: 'agrees', atMs: 6_900, figure: { value: '0.5642', unit: 'in' } });
    expect(w.text).toBe('read 0.5642 on the display at 0:06.9 → 0.5642 in: agrees with the logged 0.5642 in');
  });

  it('disagrees when it showed another figure, converting a metric display exactly (1 in = 25.4 mm, NIST SP 811 B.8)', () => {
    // 14.331 mm = 0.564212… in: the logged 0.5642 in is within half a step of 0.0001 in; 14.336 mm = 0.56441 in is not.
    expect(heardWitness(depth, withDisplay([{ startMs: 7_000, endMs: 8_000, text: '14.331', unit: 'mm' }])).state).toBe('agrees');
    const w = heardWitness(depth, withDisplay([{ startMs: 7_000, endMs: 8_000, text: '14.336', unit: 'mm' }]));
    expect(w.state).toBe('disagrees');
    expect(w.text).toMatch(/^read 14\.336 on the display at 0:07\.0 → 14\.336 mm = 0\.5644\d* in: disagrees with the logged 0\.5642 in$/);
  });

  it('leaves out what was shown far from the moment or of another quantity, and says nothing was said or shown', () => {
    const w = heardWitness(
      depth,
      withDisplay([
        { startMs: 20_000, endMs: 22_000, text: '0.5642', unit: 'in' },
        { startMs: 7_000, endMs: 8_000, text: '64.2', unit: 'cc' },
      ]),
    );
    expect(w.state).toBe('nothing-heard');
    expect(w.text).toBe('nothing heard near this moment: no length was said or shown on the display between 0:03.9 and 0:11.9');
  });

  it('agrees on what was shown when the words heard disagree, and names what agreed', () => {
    const w = heardWitness(depth, withDisplay([{ startMs: 7_000, endMs: 9_000, text: '0.5642', unit: 'in' }], said('point five six two four', 7_500)));
    expect(w.state).toBe('agrees');
    expect(w.text).toMatch(/^read 0\.5642 on the display/);
  });
});
