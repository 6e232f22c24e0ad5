import { mean, std } from 'mathjs';
import { describe, expect, it } from 'vitest';
import { computeCalc, evaluateCalc, parseCalcRequest } from '@shared/measure/calc';
import { calcResponseSchema, type CalcRequest } from '@shared/measure/calc.schema';
import { perSize } from '@shared/measure/clearance';
import { evaluateReading } from '@shared/measure/readings';

const SQRT3 = Math.sqrt(3);

/** A request with one reading taken as the whole clearance. */
function single(reading: CalcRequest['readings'][string], extra: Partial<CalcRequest> = {}) {
  return computeCalc({ readings: { r: reading }, terms: [{ reading: 'r', sign: 1 }], ...extra });
}

/** A length field of the response, which is null only for results that are not lengths. */
function um(x: number | null | undefined): number {
  if (x === null || x === undefined) throw new Error('expected a length result');
  return x;
}

/**
 * Numerical tolerance of JCGM 101:2008 7.9.2: u written to two significant digits as c × 10^l,
 * δ = ½ × 10^l. Monte Carlo interval ends are asserted to within δ of the analytic ends.
 */
function numericalTolerance(u: number): number {
  return 0.5 * 10 ** (Math.floor(Math.log10(u)) - 1);
}

function expectWithin(actual: number, expected: number, tolerance: number) {
  expect(Math.abs(actual - expected)).toBeLessThanOrEqual(tolerance);
}

describe('feeler-blade brackets', () => {
  it('puts a gap where 0.003 in enters and 0.004 in stops at about 0.0035 in', () => {
    const result = single({ kind: 'bracket', passes: 0.003, stops: 0.004, unit: 'in' });
    // ≈ 0.0035 in: common practice (no published source). Midpoint = 0.0035 in = 88.9 µm exactly.
    expect(result.value_um).toBe(88.9);
    // Rectangular between the blades, half-width 0.0005 in = 12.7 µm: u = 12.7/√3 µm (GUM 4.3.7).
    expect(result.standardUncertainty_um).toBeCloseTo(12.7 / SQRT3, 12);
    expect(result.verdict).toBeNull();
  });

  it('gives a lone bracket a 95 % interval of ±0.95a, not the normal ±1.96u', () => {
    const result = single({ kind: 'bracket', passes: 0.003, stops: 0.004, unit: 'in' });
    // The 95 % probabilistically symmetric interval of a rectangular distribution on ±a is ±0.95a
    // (k = 0.95√3 ≈ 1.65: GUM G.1.3; JCGM 101:2008 6.4.2). a = 12.7 µm → U ≈ 12.065 µm,
    // found by Monte Carlo (JCGM 101:2008 7.9), so asserted to the numerical tolerance (7.9.2).
    const delta = numericalTolerance(12.7 / SQRT3); // u = 7.3 µm → δ = 0.05 µm
    expect(result.coverageProbability).toBe(0.95);
    expect(result.method).toBe('monte-carlo');
    expectWithin(um(result.expandedUncertainty_um), 0.95 * 12.7, delta);
    expectWithin(result.coverageInterval[0], 0.0035 - 0.95 * 0.0005, delta / 25_400);
    expectWithin(result.coverageInterval[1], 0.0035 + 0.95 * 0.0005, delta / 25_400);
    expectWithin(result.coverageFactor, 0.95 * SQRT3, delta / (12.7 / SQRT3));
  });

  it('keeps U = 2u when k = 2 is asked for', () => {
    const result = single({ kind: 'bracket', passes: 0.003, stops: 0.004, unit: 'in' }, { coverageFactor: 2 });
    // U = k·u_c with the chosen k (GUM 6.2.1): 2 × 12.7/√3 µm.
    expect(result.expandedUncertainty_um).toBeCloseTo((2 * 12.7) / SQRT3, 12);
    expect(result.method).toBe('gum');
  });

  it('checks a rotor tip gap against its 0.006 in maximum', () => {
    // Rotor tip gap about 0.004–0.005 in, 0.006 in max: common practice (no published source).
    // 95 % interval = midpoint ± 0.95 × 0.0005 in = ± 0.000475 in (GUM G.1.3, JCGM 101 6.4.2),
    // which lies inside the blades: the guarded rule (ISO 14253-1) judges the whole interval.
    const tip = (passes: number, stops: number, extra: Partial<CalcRequest> = {}) =>
      single({ kind: 'bracket', passes, stops, unit: 'in' }, { spec: { max: 0.006, unit: 'in' }, ...extra }).verdict;
    expect(tip(0.004, 0.005)).toBe('conforms'); // high 0.004975 ≤ 0.006
    expect(tip(0.005, 0.006)).toBe('conforms'); // high 0.005975 ≤ 0.006: the 0.006 in blade did not enter
    expect(tip(0.006, 0.007)).toBe('does-not-conform'); // low 0.006025 ≥ 0.006: the 0.006 in blade entered
    expect(tip(0.007, 0.008)).toBe('does-not-conform'); // low 0.007025 ≥ 0.006
    // With k = 2 chosen, U = 2 × 0.0005 in/√3 ≈ 0.00058 in (GUM 4.3.7, 6.2.1) reaches past the blades.
    const k2 = { coverageFactor: 2 };
    expect(tip(0.004, 0.005, k2)).toBe('conforms'); // 0.0045 ≤ 0.006 − 0.00058
    expect(tip(0.005, 0.006, k2)).toBe('undecided'); // 0.0055 is within U of 0.006
    expect(tip(0.006, 0.007, k2)).toBe('undecided'); // 0.0065 < 0.006 + 0.00058
    expect(tip(0.007, 0.008, k2)).toBe('does-not-conform'); // 0.0075 ≥ 0.006 + 0.00058
    expect(single({ kind: 'bracket', passes: 0.005, stops: 0.006, unit: 'in' }, { spec: { max: 0.006, unit: 'in', rule: 'simple' } }).verdict).toBe(
      'conforms',
    );
  });
});

describe('end float from a bore depth and a component height', () => {
  const request: CalcRequest = {
    readings: {
      boreDepth: { kind: 'direct', value: 0.5642, unit: 'in', resolution: 0.0001 },
      componentHeight: { kind: 'direct', value: 0.5595, unit: 'in', resolution: 0.0001 },
    },
    terms: [
      { reading: 'boreDepth', sign: 1 },
      { reading: 'componentHeight', sign: -1 },
    ],
  };
  // Each: 0.0001 in = 2.54 µm resolution → u = 2.54/(2√3) µm (GUM F.2.2.1).
  const uEach = 2.54 / (2 * SQRT3);

  it('gives 0.5642 in − 0.5595 in = 0.0047 in exactly', () => {
    const result = computeCalc(request);
    // ≈ 0.0047 in end float: common practice (no published source); 0.0047 × 25.4 = 119.38 µm exactly.
    expect(result.value_um).toBe(119.38);
    expect(result.readings.boreDepth?.value_um).toBe(14330.68);
    expect(result.readings.componentHeight?.value_um).toBe(14211.3);
  });

  it('combines the two resolutions in quadrature, and expands by the k asked for', () => {
    const result = computeCalc({ ...request, coverageFactor: 2 });
    // Difference → u_c = √2 × uEach (GUM eq. 10, c = ±1); U = 2 u_c (GUM 6.2.1).
    expect(result.readings.boreDepth?.standardUncertainty_um).toBeCloseTo(uEach, 12);
    expect(result.standardUncertainty_um).toBeCloseTo(Math.SQRT2 * uEach, 12);
    expect(result.expandedUncertainty_um).toBeCloseTo(2 * Math.SQRT2 * uEach, 12);
    expect(result.method).toBe('gum');
  });

  it('gives the 95 % interval of the triangular sum by default', () => {
    const result = computeCalc(request);
    // Two rectangulars of half-width a = 1.27 µm add to a triangular of half-width 2a = 2.54 µm
    // (GUM 4.3.9; JCGM 101:2008 6.4.5). Pr(|Y − y| ≤ x) = 1 − (1 − x/2a)², so the 95 % interval is
    // ±2a(1 − √0.05) = ±1.9720 µm, where the GUM's ±1.96 u_c = ±2.032 µm is more than δ = 0.05 µm
    // wider: the Monte Carlo interval is used (JCGM 101:2008 8.2).
    const uc = Math.SQRT2 * uEach;
    const half = 2.54 * (1 - Math.sqrt(0.05));
    const delta = numericalTolerance(uc); // u_c = 1.0 µm → δ = 0.05 µm (JCGM 101:2008 7.9.2)
    expect(result.standardUncertainty_um).toBeCloseTo(uc, 12);
    expect(result.coverageProbability).toBe(0.95);
    expect(result.effectiveDegreesOfFreedom).toBeNull(); // Type B only: ν_eff = ∞ (GUM G.4.2)
    expect(result.method).toBe('monte-carlo');
    expectWithin(um(result.expandedUncertainty_um), half, delta);
    expectWithin(result.coverageInterval[0] * 25_400, 119.38 - half, delta);
    expectWithin(result.coverageInterval[1] * 25_400, 119.38 + half, delta);
  });

  it('judges it against a 0.003–0.005 in spec by both rules', () => {
    const spec = { min: 0.003, max: 0.005, unit: 'in' } as const;
    // 95 % interval 0.0047 in ± 1.972 µm ≈ ± 0.0000776 in (triangular, see above).
    expect(computeCalc({ ...request, spec }).verdict).toBe('conforms'); // [0.0046224, 0.0047776] inside
    expect(computeCalc({ ...request, spec: { ...spec, max: 0.00475 } }).verdict).toBe('undecided'); // straddles 0.00475
    expect(computeCalc({ ...request, spec: { ...spec, max: 0.0045 } }).verdict).toBe('does-not-conform'); // low 0.0046224 ≥ 0.0045
    expect(computeCalc({ ...request, spec: { ...spec, max: 0.00475, rule: 'simple' } }).verdict).toBe('conforms');
  });

  it('writes the working out line by line', () => {
    const steps = computeCalc({ ...request, spec: { min: 0.003, max: 0.005, unit: 'in' } }).steps;
    const text = steps.join('\n');
    expect(text).toMatch(/boreDepth: direct reading 0\.5642 in\./);
    expect(text).toMatch(/boreDepth: resolution 0\.0001 in, a rectangular distribution of half-width 0\.0001 in\/2: u = 0\.0001 in\/\(2√3\) = 0\.000029 in \(0\.73 µm\) \(GUM F\.2\.2\.1/);
    expect(text).toMatch(/Clearance = boreDepth − componentHeight = 0\.5642 in − 0\.5595 in = 0\.0047 in \(119\.4 µm\)/);
    expect(text).toMatch(/GUM eq\. 10/);
    // k = 1.960 for ν_eff = ∞ at 95 % (GUM G.3.2, Table G.2), then the Monte Carlo check (JCGM 101 8.2).
    expect(text).toMatch(/GUM interval: k = t_0\.975\(∞\) = 1\.960 for 95 %/);
    expect(text).toMatch(/Monte Carlo \(JCGM 101:2008 7\.9/);
    expect(text).toMatch(/so the Monte Carlo interval is used/);
    // Acceptance zone = band shrunk by the interval's sides: 0.003 + 0.0000776 … 0.005 − 0.0000776 in.
    expect(text).toMatch(/within spec when the whole coverage interval lies inside the limits \(0\.00307\d* in .*≤ value ≤ 0\.00492\d* in/);
    expect(steps.at(-1)).toMatch(/is within spec \(conforms\)\. Guarded rule \(ISO 14253-1/);
  });

  it('removes about 0.002 in when end float goes from about 0.005 in to about 0.003 in', () => {
    // ~0.005 → ~0.003 in removes ~0.002 in: common practice (no published source).
    const removed = computeCalc({
      readings: {
        before: { kind: 'direct', value: 0.005, unit: 'in', resolution: 0.0001 },
        after: { kind: 'direct', value: 0.003, unit: 'in', resolution: 0.0001 },
      },
      terms: [
        { reading: 'before', sign: 1 },
        { reading: 'after', sign: -1 },
      ],
    });
    expect(removed.value_um).toBe(50.8); // 0.002 in × 25.4 mm/in = 50.8 µm, exact
  });
});

describe('repeated readings', () => {
  it('takes the mean with Type A s/√n combined with the resolution', () => {
    const values = [14.331, 14.333, 14.33, 14.332, 14.334];
    const result = single({ kind: 'repeated', values, unit: 'mm', resolution: 0.001 });
    const valuesUm = values.map((v) => v * 1000);
    // Mean and s via mathjs (s with n − 1, GUM 4.2.2); u_A = s/√n (GUM 4.2.3);
    // resolution 1 µm → 1/(2√3) µm (GUM F.2.2.1); combined in quadrature.
    const s = Number(std(valuesUm));
    const uA = s / Math.sqrt(values.length);
    const uRes = 1 / (2 * SQRT3);
    expect(result.value_um).toBeCloseTo(Number(mean(valuesUm)), 9);
    expect(result.standardUncertainty_um).toBeCloseTo(Math.hypot(uA, uRes), 12);
  });

  it('falls back on the resolution when every reading is the same', () => {
    const result = single({ kind: 'repeated', values: [0.5, 0.5, 0.5], unit: 'mm' });
    // s = 0; resolution inferred from the last place, 0.1 mm = 100 µm → 100/(2√3) µm (GUM F.2.2.1).
    expect(result.standardUncertainty_um).toBeCloseTo(100 / (2 * SQRT3), 12);
  });
});

describe('direct readings', () => {
  it('subtracts a zero offset and combines a stated uncertainty with the resolution and the zero check\'s', () => {
    const result = single({ kind: 'direct', value: 25.012, unit: 'mm', resolution: 0.001, zeroOffset: 0.002, uncertainty: 0.0015 });
    // 25.012 − 0.002 = 25.010 mm exactly: a correction for a known systematic effect (GUM 3.2.3–3.2.4).
    expect(result.value_um).toBe(25_010);
    // The correction is itself a reading at 1 µm resolution, so it brings its own 1/(2√3) µm
    // (GUM 3.2.3 note, F.2.2.1): u = √(2 × (1/(2√3))² + 1.5²) µm (GUM eq. 10).
    expect(result.standardUncertainty_um).toBeCloseTo(Math.hypot(1 / (2 * SQRT3), 1 / (2 * SQRT3), 1.5), 12);
  });

  it('infers the resolution from the last decimal place when none is given, and says so', () => {
    const result = single({ kind: 'direct', value: 14.33, unit: 'mm' });
    expect(result.standardUncertainty_um).toBeCloseTo(10 / (2 * SQRT3), 12); // 0.01 mm step (GUM F.2.2.1)
    expect(result.steps.join('\n')).toMatch(/r: resolution 0\.01 mm \(not given: taken as one step of the last decimal place/);
  });

  it('takes the resolution from the trailing zeros of a figure sent as text', () => {
    // "14.330" says the instrument showed three places: 0.001 mm → u = 1/(2√3) µm (GUM F.2.2.1);
    // the number 14.33 cannot say so and is read at 0.01 mm.
    const result = single({ kind: 'direct', value: '14.330', unit: 'mm' });
    expect(result.value_um).toBe(14_330);
    expect(result.standardUncertainty_um).toBeCloseTo(1 / (2 * SQRT3), 12);
  });

  it('mixes units in one clearance', () => {
    const result = computeCalc({
      readings: {
        bore: { kind: 'direct', value: 14.33, unit: 'mm', resolution: 0.01 },
        part: { kind: 'direct', value: 564.2, unit: 'thou', resolution: 0.1 },
      },
      terms: [
        { reading: 'bore', sign: 1 },
        { reading: 'part', sign: -1 },
      ],
    });
    // 14.33 mm − 0.5642 in = 14 330 µm − 14 330.68 µm = −0.68 µm exactly (1 in = 25.4 mm).
    expect(result.value_um).toBe(-0.68);
  });
});

describe('the coverage factor', () => {
  it('expands by the k asked for', () => {
    const result = single({ kind: 'bracket', passes: 0.003, stops: 0.004, unit: 'in' }, { coverageFactor: 3 });
    // A chosen k fixes U = k·u_c (GUM 6.2.1): k is reported as chosen, and no Monte Carlo runs.
    expect(result.expandedUncertainty_um).toBeCloseTo(3 * (12.7 / SQRT3), 12);
    expect(result.method).toBe('gum');
    expect(result.coverageFactor).toBe(3);
  });
});

describe('per-size figures', () => {
  it('states 0.0025 in over a 2.5000 in journal as 0.001 in per inch', () => {
    // Arithmetic: 0.0025/2.5 = 0.001. (The "0.001 in per inch of journal" figure itself is
    // common practice, no published source; it is not asserted here.)
    const clearance = evaluateCalc(
      parseCalcRequest({ readings: { c: { kind: 'direct', value: 0.0025, unit: 'in', resolution: 0.0001 } }, terms: [{ reading: 'c', sign: 1 }] }),
    );
    const journal = evaluateReading('d', { kind: 'direct', value: 2.5, unit: 'in', resolution: 0.0001 });
    const figure = perSize(clearance, journal)!;
    expect(figure.ratio).toBeCloseTo(0.001, 15);
    expect(figure.perInchUm).toBeCloseTo(25.4, 9); // 0.001 in per inch
    expect(figure.per25mmUm).toBeCloseTo(25, 9); // 0.025 mm per 25 mm
    // GUM eq. (10) for r = c/d: u_r² = (u_c/d)² + (c u_d/d²)².
    const u = 2.54 / (2 * SQRT3);
    expect(figure.ratioUncertainty).toBeCloseTo(Math.hypot(u / 63_500, (63.5 * u) / 63_500 ** 2), 15);
  });

  it('has no per-size figure for a diameter that is not positive', () => {
    const zero = evaluateReading('d', { kind: 'direct', value: 0, unit: 'in', resolution: 0.0001 });
    expect(perSize({ valuePm: 1n, standardUncertaintyUm: 0 }, zero)).toBeNull();
  });
});

describe('the response', () => {
  it('matches the published response schema and keeps readings not in the clearance', () => {
    const request = parseCalcRequest({
      readings: {
        a: { kind: 'direct', value: 1, unit: 'in', resolution: 0.0001 },
        diameter: { kind: 'direct', value: 2.5, unit: 'in', resolution: 0.0001 },
      },
      terms: [{ reading: 'a', sign: 1 }],
      spec: { max: 2, unit: 'in' },
    });
    const result = computeCalc(request);
    expect(calcResponseSchema.parse(result)).toEqual(result);
    expect(Object.keys(result.readings)).toEqual(['a', 'diameter']);
    const evaluation = evaluateCalc(request);
    const [low, high] = evaluation.interval;
    // Guarded rule on the interval (ISO 14253-1): within spec while value ≤ max − (high − value),
    // out of spec from max + (value − low) up, in the result's unit (in).
    expect(evaluation.judgement?.limits.acceptMax).toBeCloseTo(2 - (high - 1), 12);
    expect(evaluation.judgement?.limits.rejectAbove).toBeCloseTo(2 + (1 - low), 12);
    // A lone 0.0001 in resolution: rectangular, 95 % half-width 0.95 × 0.00005 in (GUM G.1.3,
    // JCGM 101 6.4.2), to δ = 0.005 µm (u = 0.73 µm, JCGM 101 7.9.2).
    expectWithin(evaluation.judgement!.limits.acceptMax!, 2 - 0.95 * 0.00005, numericalTolerance(2.54 / (2 * SQRT3)) / 25_400);
  });

  it('leaves the µm fields null for a result that is not a length', () => {
    const result = single({ kind: 'direct', value: 25, unit: 'N_m', resolution: 0.5 });
    expect(calcResponseSchema.parse(result)).toEqual(result);
    expect(result.quantity).toBe('torque');
    expect(result.value_um).toBeNull();
    expect(result.standardUncertainty_um).toBeNull();
    expect(result.expandedUncertainty_um).toBeNull();
    expect(result.readings.r?.value_um).toBeNull();
    // The figures themselves are in the result's unit: 25 N·m, u = 0.5/(2√3) N·m (GUM F.2.2.1).
    expect(result.value).toBe(25);
    expect(result.standardUncertainty).toBeCloseTo(0.5 / (2 * SQRT3), 12);
  });
});
