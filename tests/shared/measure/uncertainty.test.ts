import fc from 'fast-check';
import { std } from 'mathjs';
import { describe, expect, it } from 'vitest';
import {
  combineInQuadrature,
  expandedUncertainty,
  rectangularStandardUncertainty,
  resolutionStandardUncertainty,
  typeAUncertaintyOfMeanPm,
} from '@shared/measure/uncertainty';

describe('GUM (JCGM 100:2008) building blocks', () => {
  it('gives a rectangular distribution of half-width a the standard uncertainty a/√3', () => {
    // JCGM 100:2008, 4.3.7, eq. (7): u²(x) = a²/3.
    expect(rectangularStandardUncertainty(1)).toBeCloseTo(0.5773502691896258, 15);
    fc.assert(
      fc.property(fc.double({ min: 1e-9, max: 1e6, noNaN: true }), (a) => {
        const u = rectangularStandardUncertainty(a);
        expect(Math.abs(u * u * 3 - a * a)).toBeLessThanOrEqual(1e-14 * a * a);
      }),
    );
  });

  it('gives a resolution δx the standard uncertainty δx/(2√3) ≈ 0.29 δx', () => {
    // JCGM 100:2008, F.2.2.1: half-width δx/2, so u² = δx²/12 and u = 0.29 δx.
    expect(resolutionStandardUncertainty(1)).toBeCloseTo(1 / Math.sqrt(12), 15);
    expect(Number(resolutionStandardUncertainty(1).toFixed(2))).toBe(0.29);
    // 0.0001 in = 2.54 µm resolution → 0.733 µm (arithmetic on F.2.2.1).
    expect(resolutionStandardUncertainty(2.54)).toBeCloseTo(0.7332348, 6);
  });

  it('combines uncorrelated inputs of a sum or difference in quadrature', () => {
    // JCGM 100:2008, 5.1.2, eq. (10) with c_i = ±1: u_c² = Σ u²(x_i). 3-4-5 is exact arithmetic.
    expect(combineInQuadrature([3, 4])).toBe(5);
    expect(combineInQuadrature([1, 2, 2])).toBe(3);
    expect(combineInQuadrature([0.7])).toBe(0.7); // one input: u_c = u exactly
    fc.assert(
      fc.property(fc.array(fc.double({ min: 1e-9, max: 1e4, noNaN: true }), { minLength: 1, maxLength: 100 }), (us) => {
        const direct = Math.sqrt(us.reduce((sum, u) => sum + u * u, 0));
        expect(Math.abs(combineInQuadrature(us) - direct)).toBeLessThanOrEqual(1e-14 * direct);
      }),
    );
  });

  it('takes the Type A uncertainty of a mean as s/√n, agreeing with mathjs std', () => {
    // JCGM 100:2008, 4.2.2 (s with n − 1) and 4.2.3: s²(q̄) = s²(q_k)/n. mathjs std() uses n − 1 by default.
    fc.assert(
      fc.property(fc.array(fc.integer({ min: -2_000_000_000, max: 2_000_000_000 }), { minLength: 2, maxLength: 60 }), (values) => {
        const { sPm, uPm } = typeAUncertaintyOfMeanPm(values.map(BigInt));
        const s = Number(std(values));
        expect(sPm).toBeCloseTo(s, 3);
        expect(uPm).toBeCloseTo(s / Math.sqrt(values.length), 3);
      }),
    );
  });

  it('finds no scatter in identical readings', () => {
    expect(typeAUncertaintyOfMeanPm([5n, 5n, 5n])).toEqual({ sPm: 0, uPm: 0 });
  });

  it('keeps the sum of squares exact where floating point loses the scatter', () => {
    // Values near 2 m (2e12 pm) that differ by 1 pm: in doubles x² ≈ 4e24 has no room for the
    // difference; the bigint sum of squares does. s of {a, a+1} is 1/√2 (definition, GUM 4.2.2).
    const a = 1_999_999_999_999n;
    const { sPm } = typeAUncertaintyOfMeanPm([a, a + 1n]);
    expect(sPm).toBeCloseTo(Math.SQRT1_2, 12);
  });

  it('expands by the coverage factor', () => {
    // JCGM 100:2008, 6.2.1: U = k u_c.
    expect(expandedUncertainty(1.5, 2)).toBe(3);
  });
});
