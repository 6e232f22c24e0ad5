import { mean, std } from 'mathjs';
import { describe, expect, it } from 'vitest';
import { computeCalc, evaluateCalc, parseCalcRequest } from '@shared/measure/calc';
import { calcResponseSchema, type CalcRequest } from '@shared/measure/calc.schema';
import { perSize, sumReadings } from '@shared/measure/clearance';
import { evaluateReading } from '@shared/measure/readings';

const SQRT3 = Math.sqrt(3);

/** A request with one reading taken as the whole clearance. */
function single(reading: CalcRequest['readings'][string], extra: Partial<CalcRequest> = {}) {
  return computeCalc({ readings: { r: reading }, terms: [{ reading: 'r', sign: 1 }], ...extra });
}

describe('feeler-blade brackets', () => {
  it('puts a gap where 0.003 in enters and 0.004 in stops at about 0.0035 in', () => {
    const result = single({ kind: 'bracket', passes: 0.003, stops: 0.004, unit: 'in' });
    // ≈ 0.0035 in: common practice (no published source). Midpoint = 0.0035 in = 88.9 µm exactly.
    expect(result.value_um).toBe(88.9);
    // Rectangular between the blades, half-width 0.0005 in = 12.7 µm: u = 12.7/√3 µm (GUM 4.3.7).
    expect(result.standardUncertainty_um).toBeCloseTo(12.7 / SQRT3, 12);
    expect(result.expandedUncertainty_um).toBeCloseTo((2 * 12.7) / SQRT3, 12);
    expect(result.verdict).toBeNull();
  });

  it('checks a rotor tip gap against its 0.006 in maximum', () => {
    // Rotor tip gap about 0.004–0.005 in, 0.006 in max: common practice (no published source).
    // U = 2 × 0.0005 in/√3 ≈ 0.00058 in for 0.001 in blade steps (GUM 4.3.7, k = 2).
    const tip = (passes: number, stops: number) =>
      single({ kind: 'bracket', passes, stops, unit: 'in' }, { spec: { max: 0.006, unit: 'in' } }).verdict;
    expect(tip(0.004, 0.005)).toBe('conforms'); // 0.0045 ≤ 0.006 − 0.00058
    expect(tip(0.005, 0.006)).toBe('undecided'); // 0.0055 is within U of 0.006
    expect(tip(0.006, 0.007)).toBe('undecided'); // 0.0065 < 0.006 + 0.00058
    expect(tip(0.007, 0.008)).toBe('does-not-conform'); // 0.0075 ≥ 0.006 + 0.00058
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

  it('gives 0.5642 in − 0.5595 in = 0.0047 in exactly', () => {
    const result = computeCalc(request);
    // ≈ 0.0047 in end float: common practice (no published source); 0.0047 × 25.4 = 119.38 µm exactly.
    expect(result.value_um).toBe(119.38);
    expect(result.readings.boreDepth?.value_um).toBe(14330.68);
    expect(result.readings.componentHeight?.value_um).toBe(14211.3);
  });

  it('combines the two resolutions in quadrature', () => {
    const result = computeCalc(request);
    // Each: 0.0001 in = 2.54 µm resolution → u = 2.54/(2√3) µm (GUM F.2.2.1); difference →
    // u_c = √2 × that (GUM eq. 10, c = ±1); U = 2 u_c.
    const uEach = 2.54 / (2 * SQRT3);
    expect(result.readings.boreDepth?.standardUncertainty_um).toBeCloseTo(uEach, 12);
    expect(result.standardUncertainty_um).toBeCloseTo(Math.SQRT2 * uEach, 12);
    expect(result.expandedUncertainty_um).toBeCloseTo(2 * Math.SQRT2 * uEach, 12);
    expect(result.coverageFactor).toBe(2);
  });

  it('judges it against a 0.003–0.005 in spec by both rules', () => {
    const spec = { min: 0.003, max: 0.005, unit: 'in' } as const;
    // U = 2√2 × 2.54/(2√3) µm = 2.07 µm ≈ 0.0000817 in (GUM F.2.2.1, eq. 10, k = 2).
    expect(computeCalc({ ...request, spec }).verdict).toBe('conforms'); // 0.0047 ≤ 0.005 − 0.0000817
    expect(computeCalc({ ...request, spec: { ...spec, max: 0.00475 } }).verdict).toBe('undecided'); // 0.0047 > 0.00475 − U
    expect(computeCalc({ ...request, spec: { ...spec, max: 0.0045 } }).verdict).toBe('does-not-conform'); // 0.0047 ≥ 0.0045 + U
    expect(computeCalc({ ...request, spec: { ...spec, max: 0.00475, rule: 'simple' } }).verdict).toBe('conforms');
  });

  it('writes the working out line by line', () => {
    const steps = computeCalc({ ...request, spec: { min: 0.003, max: 0.005, unit: 'in' } }).steps;
    const text = steps.join('\n');
    expect(text).toMatch(/boreDepth: direct reading 0\.5642 in, resolution 0\.0001 in/);
    expect(text).toMatch(/u_res = 0\.0001 in\/\(2√3\) = 0\.000029 in \(0\.73 µm\) \(GUM F\.2\.2\.1/);
    expect(text).toMatch(/Clearance = boreDepth − componentHeight = 0\.5642 in − 0\.5595 in = 0\.0047 in \(119 µm\)/);
    expect(text).toMatch(/GUM eq\. 10/);
    expect(text).toMatch(/U = k·u_c with k = 2/);
    expect(text).toMatch(/within spec when 0\.003082 in ≤ value ≤ 0\.004918 in/);
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
  it('subtracts a zero offset and combines a stated uncertainty with the resolution', () => {
    const result = single({ kind: 'direct', value: 25.012, unit: 'mm', resolution: 0.001, zeroOffset: 0.002, uncertainty: 0.0015 });
    // 25.012 − 0.002 = 25.010 mm exactly; u = √((1/(2√3))² + 1.5²) µm (GUM F.2.2.1 and eq. 10).
    expect(result.value_um).toBe(25_010);
    expect(result.standardUncertainty_um).toBeCloseTo(Math.hypot(1 / (2 * SQRT3), 1.5), 12);
  });

  it('infers the resolution from the last decimal place when none is given, and says so', () => {
    const result = single({ kind: 'direct', value: 14.33, unit: 'mm' });
    expect(result.standardUncertainty_um).toBeCloseTo(10 / (2 * SQRT3), 12); // 0.01 mm step (GUM F.2.2.1)
    expect(result.steps[0]).toMatch(/not given: taken as one step of the last decimal place/);
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
    expect(result.coverageFactor).toBe(3);
    expect(result.expandedUncertainty_um).toBeCloseTo(3 * (12.7 / SQRT3), 12); // GUM 6.2.1
  });
});

describe('per-size figures', () => {
  it('states 0.0025 in over a 2.5000 in journal as 0.001 in per inch', () => {
    // Arithmetic: 0.0025/2.5 = 0.001. (The "0.001 in per inch of journal" figure itself is
    // common practice, no published source; it is not asserted here.)
    const clearance = evaluateReading('c', { kind: 'direct', value: 0.0025, unit: 'in', resolution: 0.0001 });
    const journal = evaluateReading('d', { kind: 'direct', value: 2.5, unit: 'in', resolution: 0.0001 });
    const figure = perSize(sumReadings([{ reading: clearance, sign: 1 }]), journal)!;
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
    expect(evaluateCalc(request).judgement?.limits.acceptMaxPm).toBeDefined();
  });
});
