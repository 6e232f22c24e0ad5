import { describe, expect, it } from 'vitest';
import type { ClearanceResult } from '@shared/clearances/clearance.schema';
import { asPublished, changeSincePublished, publishedResult } from '../../../server/features/review/published-change';

/*
 * The words the review sheet puts beside a clearance whose published judgement differs from
 * today's. Figures invented: an end float of 0.0047 in (119.38 µm) against 0.003–0.005 in.
 */

const now: ClearanceResult = {
  quantity: 'length',
  unit: 'in',
  valueUm: 119.38,
  standardUncertaintyUm: 1.0,
  expandedUncertaintyUm: 1.98,
  coverageFactor: 1.98,
  display: '0.004700 in ± 0.000078 in (k = 1.98)',
  verdict: 'conforms',
  preferredVerdict: null,
  rejectVerdict: null,
  rule: 'guarded',
  band: { minUm: 76.2, maxUm: 127, preferredMinUm: null, preferredMaxUm: null, rejectUm: null },
  steps: [],
  method: 'gum',
  coverageProbability: 0.95,
  fixedCoverageFactor: false,
  effectiveDegreesOfFreedom: 40,
  intervalUm: [117.4, 121.36],
  probabilityOfConformance: 0.999,
  budget: [],
  warnings: [],
};
const spec = { specId: 1, name: 'End float', version: 1, sourceKind: 'manual', sourceText: 'Invented manual', newerVersion: null };
const unedited = { edited: false, specVersionThen: 1 };

/** The first engine's result: no method, always k = 2. */
function firstEngine(over: Partial<ClearanceResult> = {}): ClearanceResult {
  const { method: _m, coverageProbability: _p, fixedCoverageFactor: _f, effectiveDegreesOfFreedom: _n, intervalUm: _i, probabilityOfConformance: _c, budget: _b, warnings: _w, ...rest } = now;
  return { ...rest, coverageFactor: 2, expandedUncertaintyUm: 2.0828, display: '0.004700 in ± 0.000082 in (k = 2)', ...over };
}

describe('what changed since a clearance was published', () => {
  it('is null when the verdict and the figures as shown are the same', () => {
    expect(changeSincePublished({ result: now, spec }, { ...now, expandedUncertaintyUm: 1.981 }, 2, unedited)).toBeNull();
  });

  it('names a U that moved because the engine now works out a 95 % interval instead of k = 2', () => {
    expect(changeSincePublished({ result: now, spec }, firstEngine(), 2, unedited)).toBe(
      'U is 0.000078 in now, 0.000082 in when published (revision 2): the engine now works out a 95 % interval instead of k = 2',
    );
  });

  it('puts the verdict first, in our words, with the revision', () => {
    const undecidedNow = { ...now, verdict: 'undecided' as const };
    expect(changeSincePublished({ result: undecidedNow, spec }, firstEngine(), 2, unedited)).toBe(
      'too close to call now; within spec when published (revision 2). U is 0.000078 in now, 0.000082 in when published: the engine now works out a 95 % interval instead of k = 2',
    );
  });

  it('names a change of method, a fixed k, an edit and a spec version as the cause', () => {
    const mc = { ...now, method: 'monte-carlo' as const, expandedUncertaintyUm: 2.3 };
    expect(changeSincePublished({ result: mc, spec }, now, 1, unedited)).toBe(
      'U is 0.000091 in now, 0.000078 in when published (revision 1): the interval now comes from a Monte Carlo run (JCGM 101), then from the GUM with Student’s t',
    );
    const fixed = { ...now, fixedCoverageFactor: true, coverageFactor: 3, expandedUncertaintyUm: 3 };
    expect(changeSincePublished({ result: fixed, spec }, now, 1, unedited)).toBe('U is 0.00012 in now, 0.000078 in when published (revision 1): k = 3 is fixed now, k = 1.98 then');
    const moved = { ...now, valueUm: 121.92 };
    expect(changeSincePublished({ result: moved, spec }, now, 1, { edited: true, specVersionThen: 1 })).toBe(
      'The clearance is 0.004800 in now, 0.004700 in when published (revision 1): a reading it sums, or the clearance, was edited since',
    );
    const outNow = { ...now, verdict: 'does-not-conform' as const };
    expect(changeSincePublished({ result: outNow, spec: { ...spec, version: 2 } }, now, 1, { edited: true, specVersionThen: 1 })).toBe(
      'out of spec now; within spec when published (revision 1) (against spec v2 now, v1 then)',
    );
  });

  it('says when it cannot be worked out now', () => {
    expect(changeSincePublished({ result: null, spec }, now, 3, unedited)).toBe('cannot be worked out now; 0.004700 in ± 0.000078 in (k = 1.98), within spec when published (revision 3)');
  });

  it('reads the published judgement, with a null method before the field existed', () => {
    // 119.38 µm = 0.0047 in and 2.0828 µm = 0.000082 in (1 in = 25 400 µm, NIST SP 811 B.8).
    expect(asPublished(firstEngine(), 1)).toEqual({
      revision: 1,
      verdict: 'conforms',
      display: '0.004700 in ± 0.000082 in (k = 2)',
      valueUm: 119.38,
      expandedUncertaintyUm: 2.0828,
      method: null,
      quantity: 'length',
      unit: 'in',
      value: 119.38 / 25_400,
      expandedUncertainty: 2.0828 / 25_400,
    });
    expect(publishedResult(undefined)).toBeNull();
  });

  describe('for a result of another quantity than a length', () => {
    // Invented figures: a static compression ratio of 10.19 ± 0.11 against 9.5–10.5 by the guarded rule.
    const ratio: ClearanceResult = {
      quantity: 'ratio',
      unit: '1',
      valueUm: null,
      standardUncertaintyUm: null,
      expandedUncertaintyUm: null,
      value: 10.19,
      standardUncertainty: 0.055,
      expandedUncertainty: 0.11,
      interval: [10.08, 10.3],
      bandInUnit: { min: 9.5, max: 10.5, preferredMin: null, preferredMax: null, reject: null },
      coverageFactor: 2,
      display: '10.19 ± 0.11 (95 %, k = 2)',
      verdict: 'conforms',
      preferredVerdict: null,
      rejectVerdict: null,
      rule: 'guarded',
      band: null,
      steps: [],
      method: 'gum',
      coverageProbability: 0.95,
      fixedCoverageFactor: false,
      effectiveDegreesOfFreedom: null,
      probabilityOfConformance: 0.999,
      budget: [],
      warnings: [],
    };

    it('compares value and U in the result’s own unit, and says what moved', () => {
      const then = { ...ratio, value: 10.42, interval: [10.31, 10.53] as [number, number], verdict: 'undecided' as const, display: '10.42 ± 0.11 (95 %, k = 2)' };
      expect(changeSincePublished({ result: ratio, spec }, then, 2, { edited: true, specVersionThen: 1 })).toBe(
        'within spec now; too close to call when published (revision 2). The result is 10.19 now, 10.42 when published: a reading it uses, or the result, was edited since',
      );
      expect(changeSincePublished({ result: ratio, spec }, { ...ratio, expandedUncertainty: 0.111 }, 2, unedited)).toBeNull();
    });

    it('takes a change of unit alone for no change, and converts a published figure to today’s unit', () => {
      // 35 lbf·ft = 47.45 N·m (NIST SP 811 B.8: 1 lbf·ft = 1.355818 N·m); U 1.2 lbf·ft = 1.63 N·m.
      const torque = { ...ratio, quantity: 'torque' as const, unit: 'N_m' as const, value: 47.45, expandedUncertainty: 1.6, interval: [45.85, 49.05] as [number, number], bandInUnit: null, display: '47.5 N·m ± 1.6 N·m (95 %, k = 2)' };
      const asTyped = { ...torque, unit: 'lbf_ft' as const, value: 35, expandedUncertainty: 1.2, interval: [33.8, 36.2] as [number, number], display: '35 lbf·ft ± 1.2 lbf·ft (95 %, k = 2)' };
      expect(changeSincePublished({ result: torque, spec }, asTyped, 1, unedited)).toBeNull();
      expect(changeSincePublished({ result: { ...torque, value: 50.2 }, spec }, asTyped, 1, unedited)).toBe('The result is 50.2 N·m now, 47.5 N·m when published (revision 1)');
    });

    it('sends no µm figures, and the figures in the result’s own unit with its display', () => {
      expect(asPublished(ratio, 3)).toEqual({
        revision: 3,
        verdict: 'conforms',
        display: '10.19 ± 0.11 (95 %, k = 2)',
        valueUm: null,
        expandedUncertaintyUm: null,
        method: 'gum',
        quantity: 'ratio',
        unit: '1',
        value: 10.19,
        expandedUncertainty: 0.11,
      });
    });
  });
});
