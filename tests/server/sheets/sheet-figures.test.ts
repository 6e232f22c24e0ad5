import { describe, expect, it } from 'vitest';
import { resultsHeading } from '../../../server/features/sheets/sheet.pdf';
import { zeroOffsetText } from '../../../server/features/sheets/sheets.service';
import { specLimitTextsIn } from '@shared/public/spec-limits';

/*
 * How a sheet writes figures of any quantity: a zero offset with its sign and symbol, and a
 * spec's limits in a result's own unit. Figures invented.
 */

describe('a zero offset on a sheet', () => {
  it('keeps a length’s sign and symbol as before', () => {
    expect(zeroOffsetText('0.0001', 'in')).toBe('+0.0001 in');
    expect(zeroOffsetText('-0.002', 'mm')).toBe('−0.002 mm');
    expect(zeroOffsetText('0.0', 'thou')).toBe('0.0 thou');
  });

  it('writes any other unit with its symbol, spaced as SI spaces it (none before °)', () => {
    expect(zeroOffsetText('-0.5', 'psi')).toBe('−0.5 psi');
    expect(zeroOffsetText('0.2', 'g')).toBe('+0.2 g');
    expect(zeroOffsetText('−1', 'lbf_ft')).toBe('−1 lbf·ft');
    expect(zeroOffsetText('0.5', 'deg')).toBe('+0.5°');
    expect(zeroOffsetText('0', 'kPa')).toBe('0 kPa');
  });
});

describe('a spec’s limits in a result’s own unit', () => {
  const none = { preferredMin: null, preferredMax: null, reject: null };

  it('writes a ratio without a unit, at the places its finest limit needs', () => {
    expect(specLimitTextsIn({ min: 9.5, max: 10.5, ...none }, '1')).toEqual({ band: '9.5–10.5', preferred: null, reject: null });
    expect(specLimitTextsIn({ min: 9, max: 10.25, ...none }, '1').band).toBe('9.00–10.25');
  });

  it('writes one-sided bands, a preferred band and a reject limit with the symbol', () => {
    expect(specLimitTextsIn({ min: null, max: 180, preferredMin: null, preferredMax: 170, reject: 200 }, 'psi')).toEqual({
      band: 'at most 180 psi',
      preferred: 'at most 170 psi',
      reject: '200 psi',
    });
    expect(specLimitTextsIn({ min: 30, max: 40, ...none }, 'lbf_ft').band).toBe('30–40 lbf·ft');
    expect(specLimitTextsIn({ min: 108, max: 112, ...none }, 'deg').band).toBe('108–112°');
  });

  it('converts to another unit at the places the limits support (NIST SP 811 B.7.2)', () => {
    // 30 lbf·ft = 40.67 N·m and 40 lbf·ft = 54.23 N·m (B.8: 1 lbf·ft = 1.355818 N·m); a step of 1 lbf·ft is 1.36 N·m, so whole N·m.
    expect(specLimitTextsIn({ min: 30, max: 40, ...none }, 'lbf_ft', 'N_m').band).toBe('41–54 N·m');
    // 180 psi = 1241.06 kPa (B.8: 1 psi = 6.894757 kPa); a step of 1 psi is 6.9 kPa, so whole kPa.
    expect(specLimitTextsIn({ min: null, max: 180, ...none }, 'psi', 'kPa').band).toBe('at most 1241 kPa');
  });
});

describe('the heading of a sheet’s results', () => {
  it('says clearances when every result is a gap, results otherwise', () => {
    expect(resultsHeading([{ quantity: 'length' }, { quantity: 'length' }])).toBe('Clearances');
    expect(resultsHeading([{ quantity: 'length' }, { quantity: 'torque' }])).toBe('Results');
  });
});
