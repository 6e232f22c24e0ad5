import { mean, std } from 'mathjs';
import { describe, expect, it } from 'vitest';
import { computeCalc } from '@shared/measure/calc';
import { readingSchema } from '@shared/measure/calc.schema';

const SQRT3 = Math.sqrt(3);

function single(reading: Record<string, unknown>) {
  return computeCalc({ readings: { r: reading }, terms: [{ reading: 'r', sign: 1 }] });
}

describe('a zero offset on a repeated reading', () => {
  const values = [25.012, 25.014, 25.013, 25.015, 25.011];

  it('is subtracted from the mean, and leaves the spread of the values alone', () => {
    const plain = single({ kind: 'repeated', values, unit: 'mm', resolution: 0.001 });
    const zeroed = single({ kind: 'repeated', values, unit: 'mm', resolution: 0.001, zeroOffset: 0.002 });
    const valuesUm = values.map((v) => v * 1000);
    // The zero offset is a correction for a known systematic effect, added to (here: subtracted
    // from) the result (JCGM 100:2008, 3.2.3 and 3.2.4): mean 25.013 mm − 0.002 mm = 25.011 mm.
    expect(plain.value_um).toBeCloseTo(Number(mean(valuesUm)), 9);
    expect(zeroed.value_um).toBe(25_011);
    // Subtracting one constant from every value does not change s (GUM 4.2.2) or u_A = s/√n
    // (GUM 4.2.3); resolution 1 µm → 1/(2√3) µm (GUM F.2.2.1). The zero check is itself a reading
    // at the same 1 µm resolution, so the correction brings its own 1/(2√3) µm (GUM 3.2.3,
    // F.2.2.1), combined in quadrature (GUM eq. 10).
    const uA = Number(std(valuesUm)) / Math.sqrt(values.length);
    const uRes = 1 / (2 * SQRT3);
    const typeA = (result: typeof plain) => result.budget.find((line) => line.distribution === 'student-t');
    expect(typeA(zeroed)?.standardUncertainty).toBe(typeA(plain)?.standardUncertainty);
    expect(typeA(zeroed)?.standardUncertainty).toBeCloseTo(uA / 1000, 12); // in mm
    expect(typeA(zeroed)?.degreesOfFreedom).toBe(values.length - 1); // ν = n − 1 (GUM G.3.3)
    expect(plain.standardUncertainty_um).toBeCloseTo(Math.hypot(uA, uRes), 12);
    expect(zeroed.standardUncertainty_um).toBeCloseTo(Math.hypot(uA, uRes, uRes), 12);
  });

  it('takes the zero check\'s own resolution when it is given', () => {
    const zeroed = single({ kind: 'repeated', values, unit: 'mm', resolution: 0.001, zeroOffset: '0.0020', zeroResolution: 0.0001 });
    const uA = Number(std(values.map((v) => v * 1000))) / Math.sqrt(values.length);
    // Zero check at 0.1 µm resolution → 0.1/(2√3) µm (GUM F.2.2.1), with u_A and the reading's 1/(2√3) µm.
    expect(zeroed.value_um).toBe(25_011);
    expect(zeroed.standardUncertainty_um).toBeCloseTo(Math.hypot(uA, 1 / (2 * SQRT3), 0.1 / (2 * SQRT3)), 12);
  });

  it('shows the subtraction as its own line of working', () => {
    const steps = single({ kind: 'repeated', values, unit: 'mm', resolution: 0.001, zeroOffset: 0.002 }).steps;
    expect(steps.join('\n')).toMatch(/r: zero check read 0\.002 mm; subtracted: 25\.0130 mm − 0\.002 mm = 25\.0110 mm\./);
    expect(steps.join('\n')).toMatch(/r: zero check resolution 0\.001 mm, a rectangular distribution .*u = 0\.001 mm\/\(2√3\) = 0\.00029 mm \(0\.29 µm\) \(GUM F\.2\.2\.1/);
  });

  it('reads a negative offset (the instrument read under the standard) as adding to the mean', () => {
    const result = single({ kind: 'repeated', values: [0.5640, 0.5642], unit: 'in', resolution: 0.0001, zeroOffset: -0.0001 });
    // mean 0.5641 in − (−0.0001 in) = 0.5642 in = 14 330.68 µm (1 in = 25.4 mm exactly, NIST SP 811 B).
    expect(result.value_um).toBe(14_330.68);
  });

  it('combines a stated standard uncertainty with u_A and the resolution in quadrature', () => {
    const result = single({ kind: 'repeated', values, unit: 'mm', resolution: 0.001, uncertainty: 0.0015 });
    const valuesUm = values.map((v) => v * 1000);
    const uA = Number(std(valuesUm)) / Math.sqrt(values.length);
    // u = √(u_A² + u_res² + u_stated²) for uncorrelated inputs (GUM eq. 10).
    expect(result.standardUncertainty_um).toBeCloseTo(Math.hypot(uA, 1 / (2 * SQRT3), 1.5), 12);
  });

  it('is held to the same length rules as the values', () => {
    const bad = readingSchema.safeParse({ kind: 'repeated', values: [1, 2], unit: 'in', zeroOffset: 0.000000001 });
    expect(bad.success).toBe(false);
    expect(bad.error?.issues[0]?.path).toEqual(['zeroOffset']);
    const negative = readingSchema.safeParse({ kind: 'repeated', values: [1, 2], unit: 'in', uncertainty: -0.0001 });
    expect(negative.error?.issues[0]?.path).toEqual(['uncertainty']);
  });
});
