import { describe, expect, it } from 'vitest';
import { limitFact, limitFacts, specLimitTexts } from '@shared/public/spec-limits';

/*
 * A spec's limits in words, in the unit it was written in and in the reader's. 1 in = 25.4 mm
 * exactly (NIST SP 811 B.8); converted limits keep the places the spec was written to (B.7.2),
 * never coarser than 0.001 mm across systems (common practice, no published source).
 */
const spec = { minUm: 50.8, maxUm: 152.4, preferredMinUm: 76.2, preferredMaxUm: 127, rejectUm: 203.2 }; // 0.002–0.006 in, 0.003–0.005 in, 0.008 in

describe('a spec’s limits and where a value lies against them', () => {
  it('writes the band, preferred band and reject limit in the spec’s unit and converted', () => {
    expect(specLimitTexts(spec, 'in')).toEqual({ band: '0.002–0.006 in', preferred: '0.003–0.005 in', reject: '0.008 in' });
    // 0.002 in = 0.0508 mm, 0.003 in = 0.0762 mm, 0.005 in = 0.127 mm, 0.006 in = 0.1524 mm, 0.008 in = 0.2032 mm.
    expect(specLimitTexts(spec, 'in', 'mm')).toEqual({ band: '0.051–0.152 mm', preferred: '0.076–0.127 mm', reject: '0.203 mm' });
    expect(specLimitTexts(spec, 'in', 'thou')).toEqual({ band: '2–6 thou', preferred: '3–5 thou', reject: '8 thou' });
  });

  it('takes an open side of the preferred band from the band, as the engine judges it, and leaves out what the spec lacks', () => {
    expect(specLimitTexts({ ...spec, preferredMinUm: null, rejectUm: null }, 'in')).toEqual({ band: '0.002–0.006 in', preferred: '0.002–0.005 in', reject: null });
    expect(specLimitTexts({ minUm: null, maxUm: 152.4, preferredMinUm: null, preferredMaxUm: null, rejectUm: null }, 'in')).toEqual({ band: 'at most 0.006 in', preferred: null, reject: null });
  });

  it('says the preferred band and the reject limit in plain words, never as a second verdict', () => {
    const texts = specLimitTexts(spec, 'in');
    expect(limitFacts({ preferredVerdict: 'does-not-conform', rejectVerdict: 'conforms' }, texts)).toEqual([
      'Outside the preferred band 0.003–0.005 in.',
      'Clear of the reject limit 0.008 in.',
    ]);
    expect(limitFacts({ preferredVerdict: null, rejectVerdict: null }, texts)).toEqual([]);
    expect(limitFact('preferred', 'undecided', '0.003–0.005 in')).toBe('At the edge of the preferred band 0.003–0.005 in (its uncertainty spans the limit).');
    expect(limitFact('reject', 'does-not-conform', null)).toBe('Past the reject limit.');
  });
});
