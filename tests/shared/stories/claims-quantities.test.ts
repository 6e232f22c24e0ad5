import { describe, expect, it } from 'vitest';
import { checkClaim, findStatedFigures, type ClaimRef, type ClaimTarget } from '@shared/stories/claims';

function target(fields: Partial<ClaimTarget>): ClaimTarget {
  return {
    kind: 'reading',
    key: 't',
    name: 't',
    quantity: 'torque',
    unit: 'lbf_ft',
    value: 35,
    expandedUncertainty: 1.2,
    valueUm: 0,
    expandedUncertaintyUm: 0,
    display: '35 lbf·ft ± 1.2 lbf·ft (k = 2)',
    verdict: null,
    momentId: null,
    clipId: null,
    atMs: null,
    frameUrl: null,
    ...fields,
  };
}

const claim = (text: string, kind: ClaimRef['kind'] = 'reading'): ClaimRef => ({ kind, key: 't', text, start: 0, end: 0, line: 1 });
const targets = (t: ClaimTarget) => new Map([[`${t.kind}:${t.key}`, t]]);

describe('claims about figures that are not lengths', () => {
  it('finds torques, volumes, pressures and ratios stated in digits with their units', () => {
    expect(findStatedFigures('torqued to 35 lb-ft, then 40 ft-lbs', 'torque').map((f) => [f.text, f.unit])).toEqual([
      ['35 lb-ft', 'lbf_ft'],
      ['40 ft-lbs', 'lbf_ft'],
    ]);
    expect(findStatedFigures('the chamber cc’d at 64.2 cc', 'volume').map((f) => f.unit)).toEqual(['cc']);
    expect(findStatedFigures('a static ratio of 10.4:1', 'ratio').map((f) => f.value.valueOf())).toEqual([10.4]);
    // A length is not a torque: nothing found.
    expect(findStatedFigures('0.5642 in', 'torque')).toEqual([]);
  });

  it('agrees when the stated figure’s own rounding interval overlaps value ± U (common practice, no published source)', () => {
    const torque = target({});
    expect(checkClaim(claim('torqued to 35 lb-ft'), targets(torque))).toEqual({ state: 'ok' });
    // 36 lbf·ft means 35.5–36.5, and 35 ± 1.2 reaches 36.2: they overlap.
    expect(checkClaim(claim('torqued to 36 lb-ft'), targets(torque))).toEqual({ state: 'ok' });
    const off = checkClaim(claim('torqued to 40 lb-ft'), targets(torque));
    expect(off).toMatchObject({ state: 'number-disagrees', statedUm: null });
    if (off.state === 'number-disagrees') expect(off.message).toBe('“40 lb-ft” means 39.5–40.5 lbf·ft; the reading is 35 lbf·ft ± 1.2 lbf·ft (k = 2), and the two do not overlap.');
  });

  it('converts a figure stated in another unit exactly before comparing (NIST SP 811 B.8)', () => {
    const torque = target({});
    // 47 N·m means 46.5–47.5 N·m = 34.296–35.034 lbf·ft (1 lbf·ft = 1.3558179483314004 N·m): overlaps 33.8–36.2.
    expect(checkClaim(claim('torqued to 47 N·m'), targets(torque))).toEqual({ state: 'ok' });
    // 52 N·m means 51.5–52.5 N·m = 37.98–38.72 lbf·ft: above 36.2.
    expect(checkClaim(claim('torqued to 52 N·m'), targets(torque)).state).toBe('number-disagrees');
  });

  it('checks a compression ratio and its verdict words', () => {
    const ratio = target({ kind: 'clearance', quantity: 'ratio', unit: '1', value: 10.4, expandedUncertainty: 0.11, display: '10.40 ± 0.11', verdict: 'conforms' });
    expect(checkClaim(claim('10.4:1, within spec', 'clearance'), targets(ratio))).toEqual({ state: 'ok' });
    // 10.2:1 means 10.15–10.25; 10.40 ± 0.11 starts at 10.29.
    expect(checkClaim(claim('a 10.2:1 ratio', 'clearance'), targets(ratio)).state).toBe('number-disagrees');
    expect(checkClaim(claim('10.4:1 but out of spec', 'clearance'), targets(ratio)).state).toBe('verdict-disagrees');
  });
});
