import { createRequire } from 'node:module';
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import {
  coverageFactorFor,
  impliedCoverageProbability,
  MIN_BATCHES,
  monteCarlo,
  numericalTolerance,
  probabilityWithin,
  welchSatterthwaite,
  type MonteCarloComponent,
  type MonteCarloInput,
} from '@shared/measure/coverage';

// jstat is the independent reference for t quantiles; it ships no types, so it
// is loaded through require with the one function used here typed by hand.
const { jStat } = createRequire(import.meta.url)('jstat') as {
  jStat: {
    studentt: { inv(p: number, dof: number): number };
  };
};

const sum = (x: Float64Array): number => {
  let s = 0;
  for (let i = 0; i < x.length; i++) s += x[i] as number;
  return s;
};

/** One component entering input `index` with effect 1. */
function on(index: number, component: Omit<MonteCarloComponent, 'effects'>): MonteCarloComponent {
  return { ...component, effects: [{ index, effect: 1 }] };
}

const normal = (u: number) => ({ distribution: 'normal' as const, standardUncertainty: u, degreesOfFreedom: Infinity });
const rectangular = (a: number) => ({ distribution: 'rectangular' as const, standardUncertainty: a / Math.sqrt(3), halfWidth: a, degreesOfFreedom: Infinity });
const studentT = (u: number, dof: number) => ({ distribution: 'student-t' as const, standardUncertainty: u, degreesOfFreedom: dof });

/** The additive model Y = X₁ + … + X_N with all estimates 0 (JCGM 101 9.2.1). */
function additive(components: Omit<MonteCarloComponent, 'effects'>[], options: Partial<MonteCarloInput> = {}): MonteCarloInput {
  return {
    estimates: components.map(() => 0),
    components: components.map((c, i) => on(i, c)),
    model: sum,
    probability: 0.95,
    seed: 20080101,
    tolerance: 0.01,
    maxTrials: 2_000_000,
    ...options,
  };
}

/** CDF of the Irwin–Hall distribution (sum of n standard uniforms) at x ∈ [0, n]. */
function irwinHallCdf(n: number, x: number): number {
  let factorial = 1;
  for (let i = 2; i <= n; i++) factorial *= i;
  let total = 0;
  let binomial = 1; // C(n, k)
  for (let k = 0; k <= Math.floor(x) && k <= n; k++) {
    total += (k % 2 === 0 ? 1 : -1) * binomial * (x - k) ** n;
    binomial = (binomial * (n - k)) / (k + 1);
  }
  return total / factorial;
}

/** Irwin–Hall density, n = 3 (piecewise quadratic). */
function irwinHall3Density(x: number): number {
  if (x < 0 || x > 3) return 0;
  if (x < 1) return (x * x) / 2;
  if (x < 2) return (-2 * x * x + 6 * x - 3) / 2;
  return ((3 - x) * (3 - x)) / 2;
}

/** x with f(x) = target for an increasing f on [lo, hi], by bisection. */
function solve(f: (x: number) => number, target: number, lo: number, hi: number): number {
  for (let i = 0; i < 200; i++) {
    const mid = (lo + hi) / 2;
    if (f(mid) < target) lo = mid;
    else hi = mid;
  }
  return (lo + hi) / 2;
}

describe('coverageFactorFor (GUM 6.3, G.3, Table G.2)', () => {
  it('reproduces GUM Table G.2', () => {
    // JCGM 100:2008 Table G.2, t_p(ν) for p = 68.27, 90, 95, 95.45, 99, 99.73 %.
    const probabilities = [0.6827, 0.9, 0.95, 0.9545, 0.99, 0.9973];
    const rows: [number, number[], number][] = [
      [1, [1.84, 6.31, 12.71, 13.97, 63.66], 2], // row ν = 1 (its 99.73 % entry left out: 235.80 in the table, 235.78 computed)
      [10, [1.05, 1.81, 2.23, 2.28, 3.17, 3.96], 2], // row ν = 10
      [Infinity, [1.0, 1.645, 1.96, 2.0, 2.576, 3.0], 3], // row ν = ∞, printed to three decimals
    ];
    for (const [dof, expected, decimals] of rows) {
      expected.forEach((k, i) => {
        expect(Number(coverageFactorFor(probabilities[i] as number, dof).toFixed(decimals))).toBe(k);
      });
    }
    expect(coverageFactorFor(0.95, Infinity).toFixed(3)).toBe('1.960'); // GUM G.1.3 / Table G.1: 1.960
    expect(coverageFactorFor(0.9973, Infinity).toFixed(2)).toBe('3.00'); // GUM Table G.1: 99.73 % → 3
  });

  it('agrees with jstat over a grid of ν and p', () => {
    // Reference: jStat.studentt.inv((1 + p)/2, ν), an independent implementation.
    for (const dof of [1, 2, 3, 4, 5, 7, 10, 15, 20, 30, 50, 100, 1000]) {
      for (const p of [0.5, 0.6827, 0.9, 0.95, 0.9545, 0.99, 0.9973]) {
        const reference = jStat.studentt.inv((1 + p) / 2, dof);
        expect(Math.abs(coverageFactorFor(p, dof) - reference)).toBeLessThanOrEqual(1e-6 * reference);
      }
    }
  });

  it('truncates a non-integer ν to the next lower integer (GUM G.4.1)', () => {
    expect(coverageFactorFor(0.95, 10.99)).toBe(coverageFactorFor(0.95, 10));
    expect(coverageFactorFor(0.95, 1.5)).toBe(coverageFactorFor(0.95, 1));
    // Very large ν is the normal (they differ by ~k³/(4ν) ≈ 10⁻¹³ here).
    expect(coverageFactorFor(0.95, 1e13)).toBe(coverageFactorFor(0.95, Infinity));
    expect(Math.abs(coverageFactorFor(0.95, 1e9) - coverageFactorFor(0.95, Infinity))).toBeLessThan(1e-8);
  });

  it('rejects what has no coverage factor', () => {
    for (const p of [0, 1, -0.1, 1.5, Number.NaN]) expect(() => coverageFactorFor(p, 10)).toThrow(RangeError);
    for (const dof of [0, -1, 0.5, Number.NaN]) expect(() => coverageFactorFor(0.95, dof)).toThrow(RangeError);
  });
});

describe('impliedCoverageProbability', () => {
  it('gives 95.45 % for k = 2 and 99.73 % for k = 3 with a normal', () => {
    // JCGM 100:2008 Table G.1: k = 2 → 95.45 %, k = 3 → 99.73 %.
    expect(impliedCoverageProbability(2, Infinity).toFixed(4)).toBe('0.9545');
    expect(impliedCoverageProbability(3, Infinity).toFixed(4)).toBe('0.9973');
    // GUM Table G.2, ν = 1: t = 1.84 ↔ 68.27 %; k = 2 covers only 70.5 % (2/π·atan 2).
    expect(impliedCoverageProbability(1.837, 1)).toBeCloseTo(0.6827, 3);
    expect(impliedCoverageProbability(2, 1)).toBeCloseTo((2 / Math.PI) * Math.atan(2), 12);
  });

  it('inverts coverageFactorFor', () => {
    fc.assert(
      fc.property(
        fc.double({ min: 0.5, max: 0.999, noNaN: true }),
        fc.oneof(fc.integer({ min: 1, max: 200 }), fc.constant(Infinity)),
        (p, dof) => {
          expect(impliedCoverageProbability(coverageFactorFor(p, dof), dof)).toBeCloseTo(p, 9);
        },
      ),
    );
  });
});

describe('welchSatterthwaite (GUM G.4.1, eq. G.2b)', () => {
  it('reproduces the GUM G.4.1 example', () => {
    // From memory of JCGM 100:2008 G.4.1 EXAMPLE (not found by search): Y = bX₁X₂X₃ with relative
    // standard uncertainties 0.25 %, 0.57 %, 0.82 % from n = 10, 5, 15 observations (ν = 9, 4,
    // 14): u_c(y)/y = 1.03 %, ν_eff = 1.03⁴/(0.25⁴/9 + 0.57⁴/4 + 0.82⁴/14) = 19.0, t₉₅(19) = 2.09,
    // U₉₅ = 2.2 %.
    const terms = [
      { contribution: 0.25, dof: 9 },
      { contribution: 0.57, dof: 4 },
      { contribution: 0.82, dof: 14 },
    ];
    const nu = welchSatterthwaite(terms);
    expect(nu.toFixed(1)).toBe('19.0');
    expect(coverageFactorFor(0.95, 19).toFixed(2)).toBe('2.09');
    expect((coverageFactorFor(0.95, 19) * 1.03).toFixed(1)).toBe('2.2');
    // The GUM works with u_c rounded to 1.03 %, which gives ν_eff = 19.04; from the unrounded
    // u_c = 1.0295 % it is 18.9987, which G.4.1 truncates to 18: t = 2.10. U₉₅ is 2.2 % either way.
    expect(nu).toBeLessThan(19);
    expect(coverageFactorFor(0.95, nu).toFixed(2)).toBe('2.10');
    expect((coverageFactorFor(0.95, nu) * 1.03).toFixed(1)).toBe('2.2');
  });

  it('handles the simple cases', () => {
    // One Type A term: ν_eff is its own ν (eq. G.2b with N = 1).
    expect(welchSatterthwaite([{ contribution: 3.7, dof: 9 }])).toBeCloseTo(9, 12);
    // A Type B term with ν = ∞ adds variance but no denominator (GUM G.4.2).
    expect(welchSatterthwaite([{ contribution: 1, dof: 4 }, { contribution: 1, dof: Infinity }])).toBeCloseTo(16, 12);
    // Two equal terms with ν each: (2u²)²/(2u⁴/ν) = 2ν.
    expect(welchSatterthwaite([{ contribution: 2, dof: 5 }, { contribution: -2, dof: 5 }])).toBeCloseTo(10, 12);
    expect(welchSatterthwaite([{ contribution: 1, dof: Infinity }])).toBe(Infinity);
    expect(welchSatterthwaite([{ contribution: 0, dof: 3 }])).toBe(Infinity);
    expect(welchSatterthwaite([])).toBe(Infinity);
    // Tiny and huge figures: no underflow or overflow of the fourth powers.
    expect(welchSatterthwaite([{ contribution: 1e-100, dof: 4 }, { contribution: 1e-100, dof: 4 }])).toBeCloseTo(8, 10);
    expect(welchSatterthwaite([{ contribution: 1e100, dof: 4 }, { contribution: 1e100, dof: 4 }])).toBeCloseTo(8, 10);
    expect(() => welchSatterthwaite([{ contribution: 1, dof: 0 }])).toThrow(RangeError);
    expect(() => welchSatterthwaite([{ contribution: Number.NaN, dof: 3 }])).toThrow(RangeError);
  });

  it('lies between the smallest ν_i and Σν_i', () => {
    // Algebra on eq. (G.2b): (Σa)² ≥ Σa² gives ν_eff ≥ min ν_i; Cauchy–Schwarz gives ν_eff ≤ Σν_i.
    fc.assert(
      fc.property(
        fc.array(fc.record({ contribution: fc.double({ min: 1e-6, max: 1e6, noNaN: true }), dof: fc.integer({ min: 1, max: 100 }) }), {
          minLength: 1,
          maxLength: 12,
        }),
        (terms) => {
          const nu = welchSatterthwaite(terms);
          const smallest = Math.min(...terms.map((t) => t.dof));
          const total = terms.reduce((s, t) => s + t.dof, 0);
          expect(nu).toBeGreaterThanOrEqual(smallest * (1 - 1e-12));
          expect(nu).toBeLessThanOrEqual(total * (1 + 1e-12));
        },
      ),
    );
  });
});

describe('probabilityWithin (JCGM 106:2012 7.2, 7.3)', () => {
  it('gives 95 % for a normal within ±1.96σ', () => {
    // Φ(1.96) − Φ(−1.96) = 0.9500042 (normal table; GUM Table G.1: 95 % ↔ k = 1.960).
    expect(probabilityWithin({ min: -1.96, max: 1.96 }, 0, 1, Infinity)).toBeCloseTo(0.9500042, 7);
    // One-sided: Φ(1.645) = 0.95 (GUM Table G.1: 90 % two-sided ↔ k = 1.645).
    expect(probabilityWithin({ max: 1.645 }, 0, 1, Infinity)).toBeCloseTo(0.95, 4);
    expect(probabilityWithin({ min: -1.645 }, 0, 1, Infinity)).toBeCloseTo(0.95, 4);
    // Shifted and scaled: mean 10, u = 2, band [10 − 3.92, 10 + 3.92].
    expect(probabilityWithin({ min: 6.08, max: 13.92 }, 10, 2, Infinity)).toBeCloseTo(0.9500042, 7);
    expect(probabilityWithin({}, 3, 1, Infinity)).toBe(1);
  });

  it('uses the t-distribution for finite ν, like the coverage factor', () => {
    const k = coverageFactorFor(0.95, 10);
    expect(probabilityWithin({ min: -k, max: k }, 0, 1, 10)).toBeCloseTo(0.95, 12);
    expect(probabilityWithin({ min: -k, max: k }, 0, 1, 10.7)).toBeCloseTo(0.95, 12); // truncated like k
    // With ν = 1 a band of ±1.84u holds 68.27 %: GUM Table G.2, t₆₈.₂₇(1) = 1.84.
    expect(probabilityWithin({ min: -1.837, max: 1.837 }, 0, 1, 1)).toBeCloseTo(0.6827, 3);
  });

  it('keeps its digits far in the upper tail', () => {
    // Q(x) = 1 − Φ(x) by its asymptotic series φ(x)/x·(1 − 1/x² + 3/x⁴ − 15/x⁶ + 105/x⁸), whose
    // next term (945/x¹⁰) bounds the relative error: 9e-7 at x = 8. Q(8) − Q(9) ≈ 6.2e-16, where
    // Φ(9) − Φ(8) computed directly would be 0 or noise. (jstat's erfc is only good to ~2 % here.)
    const tail = (x: number): number => {
      const y = 1 / (x * x);
      return (Math.exp(-x * x / 2) / (x * Math.sqrt(2 * Math.PI))) * (1 - y + 3 * y * y - 15 * y ** 3 + 105 * y ** 4);
    };
    const reference = tail(8) - tail(9);
    const p = probabilityWithin({ min: 8, max: 9 }, 0, 1, Infinity);
    expect(Math.abs(p - reference)).toBeLessThanOrEqual(2e-6 * reference);
  });

  it('is 1 or 0 with no uncertainty, limits inclusive', () => {
    expect(probabilityWithin({ min: 1, max: 2 }, 1, 0, Infinity)).toBe(1);
    expect(probabilityWithin({ min: 1, max: 2 }, 2, 0, 3)).toBe(1);
    expect(probabilityWithin({ min: 1, max: 2 }, 2.000001, 0, 3)).toBe(0);
    expect(probabilityWithin({ min: 2, max: 1 }, 1.5, 1, Infinity)).toBe(0);
    expect(() => probabilityWithin({ min: 0, max: 1 }, 0, -1, Infinity)).toThrow(RangeError);
  });
});

describe('numericalTolerance (JCGM 101 7.9.2)', () => {
  it('is half a unit in the last reported digit', () => {
    // JCGM 101 7.9.2: u = c × 10^l with c of ndig digits, δ = ½ × 10^l.
    expect(numericalTolerance(2)).toBe(0.05); // 2.0: c = 20, l = −1
    expect(numericalTolerance(2, 1)).toBe(0.5); // 2: c = 2, l = 0
    expect(numericalTolerance(10.15)).toBe(0.5); // 10: c = 10, l = 0
    expect(numericalTolerance(0.00035)).toBe(0.000005); // c = 35, l = −5
    expect(numericalTolerance(0.0999)).toBe(0.005); // rounds to 0.10: c = 10, l = −2
    expect(numericalTolerance(1000)).toBe(50); // c = 10, l = 2
    expect(numericalTolerance(0)).toBe(0);
    expect(() => numericalTolerance(-1)).toThrow(RangeError);
    expect(() => numericalTolerance(1, 0)).toThrow(RangeError);
  });
});

describe('monteCarlo (JCGM 101:2008 clause 7)', () => {
  it('finds ±0.95a for one rectangular of half-width a', () => {
    // Rectangular on ±a: the symmetric 95 % interval is ±0.95a, k = 0.95√3 = 1.65 (GUM G.1.3).
    const a = 1;
    const r = monteCarlo(additive([rectangular(a)], { tolerance: 0.005 }));
    expect(r.converged).toBe(true);
    expect(Math.abs(r.low + 0.95 * a)).toBeLessThanOrEqual(0.005);
    expect(Math.abs(r.high - 0.95 * a)).toBeLessThanOrEqual(0.005);
    expect(Math.abs(r.standardDeviation - a / Math.sqrt(3))).toBeLessThanOrEqual(0.005); // GUM 4.3.7
  });

  it('finds ±2a(1 − √(1 − p)) for the sum of two equal rectangulars (triangular)', () => {
    // Two rectangulars of half-width a sum to a triangular of half-width 2a (GUM 4.3.9); its tails
    // each hold (1 − w/2a)²/2, so P(|Y| ≤ w) = p gives w = 2a(1 − √(1 − p)) = 1.5528a at 95 %.
    const a = 1;
    const w = 2 * a * (1 - Math.sqrt(1 - 0.95));
    const r = monteCarlo(additive([rectangular(a), rectangular(a)], { tolerance: 0.005 }));
    expect(r.converged).toBe(true);
    expect(Math.abs(r.low + w)).toBeLessThanOrEqual(0.005);
    expect(Math.abs(r.high - w)).toBeLessThanOrEqual(0.005);
  });

  it('finds ±1.96u for a normal', () => {
    // GUM Table G.1: 95 % ↔ k = 1.960.
    const r = monteCarlo(additive([normal(1)], { band: { min: -1.96, max: 1.96 } }));
    expect(r.converged).toBe(true);
    expect(Math.abs(r.low + 1.96)).toBeLessThanOrEqual(0.01);
    expect(Math.abs(r.high - 1.96)).toBeLessThanOrEqual(0.01);
    expect(Math.abs(r.mean)).toBeLessThanOrEqual(0.01);
    expect(Math.abs(r.standardDeviation - 1)).toBeLessThanOrEqual(0.01);
    // Fraction within ±1.96: 0.9500 (normal table), binomial standard error √(0.95·0.05/M) < 3e-4.
    expect(Math.abs((r.probabilityWithin as number) - 0.95)).toBeLessThanOrEqual(0.001);
  });

  it('finds ±12.71u for one Type A mean with ν = 1', () => {
    // JCGM 101 6.4.9: u·t₁ (Cauchy); its 95 % interval is ±t₀.₉₇₅(1)·u = ±12.71u (GUM Table G.2).
    // A fixed 3·10⁶ trials (δ = 0 never stabilises): the standard error of either end is
    // √(0.025·0.975/M)/f(12.71) = 0.046 with f the Cauchy density, so 0.15 is over 3 of them.
    const fixed = monteCarlo(additive([studentT(1, 1)], { tolerance: 0, maxTrials: 3_000_000 }));
    expect(fixed.converged).toBe(false);
    expect(Math.abs(fixed.low + 12.706)).toBeLessThanOrEqual(0.15);
    expect(Math.abs(fixed.high - 12.706)).toBeLessThanOrEqual(0.15);
    // Adaptively: mean and standard deviation do not exist for ν = 1 and never settle, so only
    // the interval decides when to stop; with them in the rule this would run to maxTrials.
    const adaptive = monteCarlo(additive([studentT(1, 1)], { tolerance: 0.2, maxTrials: 3_000_000 }));
    expect(adaptive.converged).toBe(true);
    // 2s/√h ≤ δ holds each end to δ at about 95 %; s from as few as h = 2 batches (7.9.4 allows
    // it, and this seed stops there) is itself rough, so the check is 2δ.
    expect(Math.abs(adaptive.low + 12.706)).toBeLessThanOrEqual(0.4);
    expect(Math.abs(adaptive.high - 12.706)).toBeLessThanOrEqual(0.4);
  });

  it('draws a Type A mean with variance u²ν/(ν − 2)', () => {
    // JCGM 101 6.4.9.4: the t-distribution of a Type A mean has variance u²ν/(ν − 2); for
    // ν = 10, u(y) = √(10/8)·u = 1.118u, and the interval is ±t₀.₉₇₅(10)·u = ±2.23u (Table G.2).
    const r = monteCarlo(additive([studentT(1, 10)]));
    expect(r.converged).toBe(true);
    expect(Math.abs(r.standardDeviation - Math.sqrt(10 / 8))).toBeLessThanOrEqual(0.01);
    expect(Math.abs(r.high - coverageFactorFor(0.95, 10))).toBeLessThanOrEqual(0.01);
  });

  it('reproduces JCGM 101 9.2.2: four normal inputs', () => {
    // JCGM 101:2008 9.2.2, Table 2 (from memory; not found by search): X_i ~ N(0, 1), Y = ΣX_i,
    // MCM y = 0.00, u(y) = 2.00, interval [−3.92, 3.92]. Analytic: ±1.95996·2 = ±3.9199.
    const r = monteCarlo(additive([normal(1), normal(1), normal(1), normal(1)]));
    expect(r.converged).toBe(true);
    expect(Math.abs(r.mean - 0.0)).toBeLessThanOrEqual(0.005 + 0.01);
    expect(Math.abs(r.standardDeviation - 2.0)).toBeLessThanOrEqual(0.005 + 0.01);
    expect(Math.abs(r.low + 3.92)).toBeLessThanOrEqual(0.005 + 0.01);
    expect(Math.abs(r.high - 3.92)).toBeLessThanOrEqual(0.005 + 0.01);
    expect(Math.abs(r.high - 2 * coverageFactorFor(0.95, Infinity))).toBeLessThanOrEqual(0.01);
  });

  it('reproduces JCGM 101 9.2.3: four rectangular inputs', () => {
    // JCGM 101:2008 9.2.3, Table 3 (from memory; not found by search): X_i rectangular with
    // expectation 0 and standard deviation 1 (a = √3), MCM interval [−3.88, 3.88] where the GUM
    // framework's ±3.92 is too wide. Analytic: Y = 2√3(S − 2) with S Irwin–Hall (n = 4).
    const a = Math.sqrt(3);
    const exact = 2 * a * (solve((s) => irwinHallCdf(4, s), 0.975, 0, 4) - 2);
    expect(exact.toFixed(2)).toBe('3.88');
    const r = monteCarlo(additive([rectangular(a), rectangular(a), rectangular(a), rectangular(a)]));
    expect(r.converged).toBe(true);
    expect(Math.abs(r.low + 3.88)).toBeLessThanOrEqual(0.005 + 0.01);
    expect(Math.abs(r.high - 3.88)).toBeLessThanOrEqual(0.005 + 0.01);
    expect(Math.abs(r.high - exact)).toBeLessThanOrEqual(0.01);
    expect(Math.abs(r.low + exact)).toBeLessThanOrEqual(0.01);
  });

  it('reproduces JCGM 101 9.2.4: rectangular inputs of different widths', () => {
    // JCGM 101:2008 9.2.4, Table 4 (from memory; not found by search): X₁…X₃ as in 9.2.3, X₄
    // rectangular with standard deviation 10; u(y) = √103 = 10.15, GUM framework ±19.9, MCM
    // [−17.0, 17.0]. Analytic: P(Y ≤ y) = E_S[F_W(y − S)] with W rectangular on ±10√3 and S the
    // sum of the three narrow ones, integrated by Simpson's rule.
    const narrow = Math.sqrt(3);
    const wide = 10 * Math.sqrt(3);
    const cdf = (y: number): number => {
      // S = 2√3(V − 3/2), V Irwin–Hall n = 3 on [0, 3].
      const steps = 3000;
      const h = 3 / steps;
      let total = 0;
      for (let i = 0; i <= steps; i++) {
        const v = i * h;
        const s = 2 * narrow * (v - 1.5);
        const fw = Math.min(1, Math.max(0, (y - s + wide) / (2 * wide)));
        const weight = i === 0 || i === steps ? 1 : i % 2 === 1 ? 4 : 2;
        total += weight * irwinHall3Density(v) * fw;
      }
      return (total * h) / 3;
    };
    const exact = solve(cdf, 0.975, 0, 25);
    expect(exact.toFixed(1)).toBe('17.0');
    const r = monteCarlo(additive([rectangular(narrow), rectangular(narrow), rectangular(narrow), rectangular(wide)], { tolerance: 0.05 }));
    expect(r.converged).toBe(true);
    expect(Math.abs(r.standardDeviation - Math.sqrt(103))).toBeLessThanOrEqual(0.05);
    expect(Math.abs(r.low + 17.0)).toBeLessThanOrEqual(0.05 + 0.05);
    expect(Math.abs(r.high - 17.0)).toBeLessThanOrEqual(0.05 + 0.05);
    expect(Math.abs(r.high - exact)).toBeLessThanOrEqual(0.05);
    expect(Math.abs(r.low + exact)).toBeLessThanOrEqual(0.05);
  });

  it('is reproducible: same seed, same result; another seed, other draws but the same interval', () => {
    const firstDraws = (seed: number): { values: number[]; result: ReturnType<typeof monteCarlo> } => {
      const values: number[] = [];
      const result = monteCarlo(
        additive([normal(1), rectangular(2), studentT(0.5, 6)], {
          seed,
          tolerance: 0.02,
          model: (x) => {
            if (values.length < 5) values.push(x[0] as number);
            return sum(x);
          },
        }),
      );
      return { values, result };
    };
    const a = firstDraws(1);
    const b = firstDraws(1);
    const c = firstDraws(2);
    expect(b.result).toEqual(a.result);
    expect(b.values).toEqual(a.values);
    expect(c.values).not.toEqual(a.values);
    expect(c.result.mean).not.toBe(a.result.mean);
    // Each is stabilised to δ = 0.02 (2s ≤ δ), so two runs differ by less than 2δ.
    expect(Math.abs(c.result.low - a.result.low)).toBeLessThanOrEqual(0.04);
    expect(Math.abs(c.result.high - a.result.high)).toBeLessThanOrEqual(0.04);
  });

  it('moves the inputs a component shares together (correlation 1)', () => {
    // GUM F.1.2.3, 5.2.2: one instrument error entering two readings cancels in their difference
    // and adds linearly (u(x₀ + x₁) = 2u, eq. 16 with r = 1) in their sum.
    const shared: MonteCarloComponent = {
      ...normal(0.3),
      effects: [
        { index: 0, effect: 1 },
        { index: 1, effect: 1 },
      ],
    };
    const input = { estimates: [5, 2], components: [shared], probability: 0.95, seed: 3, tolerance: 0.005 };
    const difference = monteCarlo({ ...input, model: (x) => (x[0] as number) - (x[1] as number) });
    expect(difference.converged).toBe(true);
    // Only rounding is left: (5 + δ) − (2 + δ) is 3 to within an ulp of 5.
    expect(difference.standardDeviation).toBeLessThan(1e-14);
    expect(Math.abs(difference.low - 3)).toBeLessThan(1e-14);
    expect(Math.abs(difference.high - 3)).toBeLessThan(1e-14);
    expect(difference.trials).toBe(MIN_BATCHES * 10_000); // batches agree exactly, so it stops at the fewest batches allowed
    const total = monteCarlo({ ...input, model: (x) => (x[0] as number) + (x[1] as number), maxTrials: 2_000_000 });
    expect(Math.abs(total.standardDeviation - 0.6)).toBeLessThanOrEqual(0.005);
  });

  it('reports no convergence when maxTrials comes first, in whole batches', () => {
    // Default batch for p = 0.95: max(⌈100/0.05⌉, 10⁴) = 10⁴ (JCGM 101 7.9.4 a).
    const r = monteCarlo(additive([normal(1)], { tolerance: 0, maxTrials: 25_000 }));
    expect(r.converged).toBe(false);
    expect(r.trials).toBe(20_000);
    expect(r.probabilityWithin).toBeNull();
    // p = 0.999: ⌈100/0.001⌉ = 10⁵ per batch.
    const wide = monteCarlo(additive([normal(1)], { probability: 0.999, tolerance: 0, maxTrials: 250_000 }));
    expect(wide.trials).toBe(200_000);
  });

  it('rejects what it cannot propagate', () => {
    const base = additive([normal(1)], { maxTrials: 10_000 });
    expect(() => monteCarlo({ ...base, probability: 1 })).toThrow(RangeError);
    expect(() => monteCarlo({ ...base, components: [{ ...normal(1), effects: [{ index: 3, effect: 1 }] }] })).toThrow(RangeError);
    expect(() => monteCarlo({ ...base, components: [on(0, { ...normal(1), standardUncertainty: Number.NaN })] })).toThrow(RangeError);
    expect(() => monteCarlo({ ...base, model: () => Number.NaN })).toThrow(/model returned NaN/);
  });
});
