import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { Fraction, fractionToFixed } from '@shared/measure/exact';
import {
  convertedDecimals,
  convertWrittenLength,
  formatConvertedLength,
  formatLimitSpan,
  formatNumber,
  limitDecimals,
  showsFineUnit,
} from '@shared/measure/format';
import { convertedDecimalsIn, decimalsForStep, formatConvertedFigure } from '@shared/measure/format-quantity';
import { picometresPerUnit } from '@shared/measure/units';

/*
 * Figures converted to the reader's unit keep the precision of the figure written, no more and no
 * less: NIST SP 811 (2008) B.7.2 ("Rounding converted numerical values of quantities"), with the
 * exact factors of B.8 (inch = 2.54 E−02 m exactly, so 1 in = 25.4 mm; pound-force per square inch
 * = 6.894 757 E+03 Pa; °F to °C as in B.8's temperature entries, t/°C = (t/°F − 32)/1.8).
 */

/** Exact picometres of plain decimal text in `unit` (for the examples' figures). */
const pmOf = (text: string, unit: 'in' | 'mm') => {
  const [whole, fraction = ''] = text.replace('−', '-').split('.');
  return (BigInt(`${whole}${fraction}`) * picometresPerUnit[unit]) / 10n ** BigInt(fraction.length);
};
const inches = (text: string) => pmOf(text, 'in');

describe('a length written in one unit, shown in another', () => {
  it('shows a 0.5642 in reading as 14.331 mm: 0.0001 in is 0.00254 mm, so the millimetres go to 0.001 mm', () => {
    // 0.5642 × 25.4 = 14.33068 mm exactly; steps of 0.001 mm are the largest not coarser than 0.00254 mm.
    expect(convertedDecimals(4, 'in', 'mm')).toBe(3);
    expect(formatConvertedLength(inches('0.5642'), 'in', 4, 'mm')).toBe('14.331 mm');
    expect(formatConvertedLength(inches('1.0000'), 'in', 4, 'mm')).toBe('25.400 mm');
  });

  it('converts a 0.0015–0.0040 in band to 0.038–0.102 mm, not 0.0381–0.1016 mm', () => {
    // 0.0015 in = 0.0381 mm and 0.0040 in = 0.1016 mm exactly; the fourth place would claim a tenth
    // of a micrometre the inch figure never held.
    expect(formatConvertedLength(inches('0.0015'), 'in', 4, 'mm')).toBe('0.038 mm');
    expect(formatConvertedLength(inches('0.0040'), 'in', 4, 'mm')).toBe('0.102 mm');
    expect(formatLimitSpan(inches('0.0015'), inches('0.0040'), 'mm', limitDecimals([inches('0.0015'), inches('0.004')], 'in', 'mm'))).toBe('0.038–0.102 mm');
  });

  it('converts millimetres to inches the same way: 0.01 mm is 0.000394 in, so four places', () => {
    // 25.40 mm = 1 in exactly; 14.331 mm = 0.564212… in, and 0.001 mm = 0.0000394 in gives five places.
    expect(formatConvertedLength(25_400_000_000n, 'mm', 2, 'in')).toBe('1.0000 in');
    expect(formatConvertedLength(14_331_000_000n, 'mm', 3, 'in')).toBe('0.56421 in');
  });

  it('keeps the places within a system, where the factors are powers of ten and the change is exact', () => {
    expect(convertWrittenLength('3.5 thou', 'thou', 'in')).toBe('0.0035 in');
    expect(convertWrittenLength('564.2 thou', 'thou', 'in')).toBe('0.5642 in');
    expect(convertWrittenLength('0.0015 in', 'in', 'thou')).toBe('1.5 thou');
    expect(convertWrittenLength('0.038 mm', 'mm', 'um')).toBe('38 µm');
    expect(convertWrittenLength('0.5642 in', 'in', 'in')).toBe('0.5642 in');
    expect(convertWrittenLength('no figure', 'in', 'mm')).toBeNull();
  });

  it('loses nothing: a four-place inch figure converted to millimetres and back at four places is the figure again', () => {
    fc.assert(
      fc.property(fc.integer({ min: -99_999, max: 99_999 }), (tenThousandths) => {
        const pm = BigInt(tenThousandths) * picometresPerUnit.tenth;
        const inMm = pmOf(formatNumber(pm, 'mm', convertedDecimals(4, 'in', 'mm')), 'mm');
        // The millimetre figure is off by at most 0.0005 mm = 0.0000197 in, under half of 0.0001 in.
        expect(formatNumber(inMm, 'in', 4)).toBe(formatNumber(pm, 'in', 4));
      }),
    );
  });

  it('never shows a converted limit coarser than 0.001 mm or 0.0001 in across systems', () => {
    // Whole thou would round to 0.01 mm by B.7.2 alone (0.001 in = 0.0254 mm); a limit is exact as
    // written, so it keeps 0.001 mm (common practice, no published source): 0.003 in → 0.076 mm.
    expect(limitDecimals([inches('0.003'), inches('0.005')], 'in', 'mm')).toBe(3);
    expect(formatLimitSpan(inches('0.003'), inches('0.005'), 'mm', 3)).toBe('0.076–0.127 mm');
    // In the unit it was written in, the finest limit sets the places: 0.0015 and 0.004 read 0.0015 and 0.0040.
    expect(limitDecimals([inches('0.0015'), inches('0.004')], 'in', 'in')).toBe(4);
    expect(formatLimitSpan(null, inches('0.006'), 'in', 4)).toBe('at most 0.0060 in');
    expect(formatLimitSpan(inches('0.002'), null, 'thou', 1)).toBe('at least 2.0 thou');
  });

  it('gives the fine unit beside figures below one main unit only: 119 µm, but never 14331 µm', () => {
    expect(showsFineUnit(119_380_000n, 'mm')).toBe(true);
    expect(showsFineUnit(inches('0.5642'), 'mm')).toBe(false);
    expect(showsFineUnit(inches('0.0047'), 'in')).toBe(true);
    expect(showsFineUnit(-inches('0.0047'), 'in')).toBe(true);
  });
});

describe('any quantity written in one unit, shown in another', () => {
  it('reproduces NIST SP 811 B.7.2’s worked example: 36 ft = 10.9728 m is written 11.0 m', () => {
    // A step of 1 ft is 0.3048 m; the largest power of ten not coarser is 0.1 m.
    expect(decimalsForStep(new Fraction(3048n, 10000n))).toBe(1);
    expect(fractionToFixed(new Fraction(109728n, 10000n), 1)).toBe('11.0');
  });

  it('converts inches to millimetres, degrees Fahrenheit to Celsius and psi to bar at the places the figure supports', () => {
    expect(formatConvertedFigure('0.5642', 'in', 'mm')).toBe('14.331 mm');
    // 68 °F = 20 °C exactly; a step of 1 °F is 5/9 °C, so one place: "20" would claim less than the figure held.
    expect(convertedDecimalsIn(0, 'degF', 'degC')).toBe(1);
    expect(formatConvertedFigure('68', 'degF', 'degC')).toBe('20.0 °C');
    expect(formatConvertedFigure('20.0', 'degC', 'degF')).toBe('68.0 °F');
    // 30 psi = 30 × 6894.757… Pa = 2.068 427… bar; a step of 1 psi is 0.0689 bar, so two places.
    expect(formatConvertedFigure('30', 'psi', 'bar')).toBe('2.07 bar');
    expect(formatConvertedFigure('0.5642', 'in', 'in')).toBe('0.5642 in');
    expect(formatConvertedFigure('about 3', 'in', 'mm')).toBeNull();
  });
});
