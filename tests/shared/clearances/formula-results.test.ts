import { describe, expect, it } from 'vitest';
import { computeClearance } from '@shared/clearances/clearance-calc';
import { clearanceResultSchema } from '@shared/clearances/clearance.schema';
import { resultFigures } from '@shared/clearances/result-figures';
import { formulaTemplate } from '@shared/measure/formula-templates';
import type { SpecVersion } from '@shared/specs/spec-library.schema';

function spec(over: Partial<SpecVersion>): SpecVersion {
  return {
    id: 1,
    specId: 1,
    version: 1,
    unit: '1',
    min: null,
    max: null,
    preferredMin: null,
    preferredMax: null,
    reject: null,
    rule: 'guarded',
    source: { kind: 'common-practice', text: 'Invented figures for a test' },
    note: '',
    createdAt: '2026-12-01T00:00:00.000Z',
    ...over,
  };
}

function ok(result: ReturnType<typeof computeClearance>) {
  if (!result.ok) throw new Error(result.problems.join('; '));
  return clearanceResultSchema.parse(result.result);
}

const direct = (value: string, unit: 'in' | 'cc') => ({ kind: 'direct', value, unit }) as const;

/** Invented engine figures (demo-style), read as typed so each carries its resolution. */
const engine = {
  bore: direct('4.000', 'in'),
  stroke: direct('3.480', 'in'),
  chamber: direct('64.2', 'cc'),
  'gasket-bore': direct('4.100', 'in'),
  'gasket-thickness': direct('0.040', 'in'),
  'deck-height': direct('0.010', 'in'),
  dish: direct('5.0', 'cc'),
} as const;

describe('results as formulas over named readings', () => {
  it('works out a static compression ratio from cc’d volumes and geometry, and judges it against a ratio spec', () => {
    const template = formulaTemplate('compression-ratio')!;
    const result = ok(
      computeClearance({
        terms: Object.entries(engine).map(([key, reading]) => ({ key, engine: reading, sign: 1 as const })),
        formula: { text: template.formula, constants: {} },
        spec: spec({ min: '9.5', max: '10.5' }),
        coverageFactor: null,
      }),
    );
    // Independent arithmetic: 1 in = 2.54 cm exactly (NIST SP 811 B.8), so 1 in³ = 16.387064 cc;
    // a cylinder is π/4·d²·h (geometry).
    const CC_PER_CU_IN = 16.387064;
    const cyl = (d: number, h: number) => (Math.PI / 4) * d * d * h * CC_PER_CU_IN;
    const tdc = 64.2 + cyl(4.1, 0.04) + cyl(4, 0.01) + 5.0;
    const expected = (cyl(4, 3.48) + tdc) / tdc;
    expect(result.quantity).toBe('ratio');
    expect(result.unit).toBe('1');
    expect(result.valueUm).toBeNull();
    expect(result.value!).toBeCloseTo(expected, 9);
    expect(result.verdict).toBe('conforms');
    expect(result.bandInUnit).toEqual({ min: 9.5, max: 10.5, preferredMin: null, preferredMax: null, reject: null });
    // Every reading carries a budget line; the chamber's resolution (0.1 cc, rectangular) is one of them.
    expect(result.budget!.some((line) => line.reading === 'chamber')).toBe(true);
    const figures = resultFigures(result);
    expect(figures.interval[0]).toBeLessThan(figures.value);
    expect(figures.interval[1]).toBeGreaterThan(figures.value);
    expect(result.display).toMatch(/^9\.9\d+ ± 0\.\d+/);
  });

  it('halves a diametral clearance into a radial one and states it in the unit chosen', () => {
    const result = ok(
      computeClearance({
        terms: [{ key: 'diametral', engine: { kind: 'direct', value: '0.0024', unit: 'in' }, sign: 1 }],
        formula: { text: 'diametral / 2', constants: {} },
        resultUnit: 'thou',
        spec: null,
        coverageFactor: null,
      }),
    );
    // 0.0024 in / 2 = 0.0012 in = 1.2 thou = 30.48 µm (1 in = 25.4 mm, NIST SP 811 B.8).
    expect(result.quantity).toBe('length');
    expect(result.unit).toBe('thou');
    expect(result.value).toBeCloseTo(1.2, 12);
    expect(result.valueUm).toBeCloseTo(30.48, 9);
  });

  it('takes a target as an exact constant, not a fake reading', () => {
    const result = ok(
      computeClearance({
        terms: [{ key: 'measured', engine: { kind: 'direct', value: '0.5660', unit: 'in' }, sign: 1 }],
        formula: { text: 'measured - target', constants: { target: { value: '0.5642', unit: 'in' } } },
        spec: null,
        coverageFactor: null,
      }),
    );
    // 0.5660 − 0.5642 = 0.0018 in; the target adds nothing to u, so u is the reading's alone:
    // half its 0.0001 in step over √3 (GUM 4.3.7).
    expect(result.value).toBeCloseTo(0.0018, 12);
    expect(result.standardUncertainty).toBeCloseTo(0.00005 / Math.sqrt(3), 12);
  });

  it('refuses a length plus a volume with a clear message instead of a figure', () => {
    const refused = computeClearance({
      terms: [
        { key: 'bore', engine: engine.bore, sign: 1 },
        { key: 'chamber', engine: engine.chamber, sign: 1 },
      ],
      formula: { text: 'bore + chamber', constants: {} },
      spec: null,
      coverageFactor: null,
    });
    expect(refused.ok).toBe(false);
    if (!refused.ok) expect(refused.problems.join(' ')).toMatch(/length.*volume|volume.*length/i);
  });

  it('judges a torque against a spec in another torque unit, converted exactly', () => {
    const result = ok(
      computeClearance({
        terms: [{ key: 'torque', engine: { kind: 'direct', value: '35', unit: 'lbf_ft' }, sign: 1 }],
        spec: spec({ unit: 'N_m', min: '40', max: '54' }),
        coverageFactor: null,
      }),
    );
    // 35 lbf·ft = 47.4536… N·m (1 lbf·ft = 1.3558179483314004 N·m, NIST SP 811 B.8), inside 40–54 N·m.
    expect(result.quantity).toBe('torque');
    expect(result.unit).toBe('N_m');
    expect(result.value).toBeCloseTo(35 * 4.4482216152605 * 0.3048, 9);
    expect(result.verdict).toBe('conforms');
  });
});
