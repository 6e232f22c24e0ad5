import { describe, expect, it } from 'vitest';
import { computeClearance } from '@shared/clearances/clearance-calc';
import { clearanceTemplates } from '@shared/clearances/templates';
import { clearanceResultSchema, sumTemplateIds } from '@shared/clearances/clearance.schema';
import type { SpecVersion } from '@shared/specs/spec-library.schema';

const SQRT3 = Math.sqrt(3);

function spec(over: Partial<SpecVersion>): SpecVersion {
  return {
    id: 1,
    specId: 1,
    version: 1,
    unit: 'in',
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

/** The worked end-float figures of tests/shared/measure/calc.test.ts. */
const endFloat = [
  { key: 'bore-depth', engine: { kind: 'direct', value: 0.5642, unit: 'in', resolution: 0.0001 } as const, sign: 1 as const },
  { key: 'rotor-height', engine: { kind: 'direct', value: 0.5595, unit: 'in', resolution: 0.0001 } as const, sign: -1 as const },
];

function ok(result: ReturnType<typeof computeClearance>) {
  if (!result.ok) throw new Error(result.problems.join('; '));
  return clearanceResultSchema.parse(result.result);
}

describe('computeClearance: end float from a depth and a height', () => {
  it('is bore depth − rotor height, with the two resolutions combined in quadrature', () => {
    const result = ok(computeClearance({ terms: endFloat, spec: null, coverageFactor: 2 }));
    // 0.5642 in − 0.5595 in = 0.0047 in = 119.38 µm exactly (1 in = 25.4 mm, NIST SP 811 B.8).
    expect(result.valueUm).toBe(119.38);
    // Each: 0.0001 in = 2.54 µm → u = 2.54/(2√3) µm (GUM F.2.2.1); u_c = √2 u (GUM eq. 10); U = 2 u_c (GUM 6.2.1).
    const uEach = 2.54 / (2 * SQRT3);
    expect(result.standardUncertaintyUm).toBeCloseTo(Math.SQRT2 * uEach, 12);
    expect(result.expandedUncertaintyUm).toBeCloseTo(2 * Math.SQRT2 * uEach, 12);
    expect(result.verdict).toBeNull();
    expect(result.band).toBeNull();
    // U = 2.074 µm = 0.0000817 in → two significant digits, value to the same place (GUM 7.2.6),
    // with the k chosen (GUM 7.2.3).
    expect(result.display).toMatch(/^0\.004700 in ± 0\.000082 in \(.*k = 2(\.00)?\)$/);
    expect(result.method).toBe('gum');
    expect(result.fixedCoverageFactor).toBe(true);
    expect(result.steps.join('\n')).toMatch(/Clearance = bore-depth − rotor-height = 0\.5642 in − 0\.5595 in = 0\.0047 in/);
  });

  it('gives the 95 % interval of the triangular sum when no k is chosen', () => {
    const result = ok(computeClearance({ terms: endFloat, spec: null, coverageFactor: null }));
    // Two rectangulars of half-width a = 1.27 µm add to a triangular of half-width 2a = 2.54 µm
    // (GUM 4.3.9; JCGM 101:2008 6.4.5): 95 % interval ±2a(1 − √0.05) = ±1.972 µm, found by Monte
    // Carlo (JCGM 101:2008 7.9, 8.2), to the numerical tolerance δ = 0.05 µm (u_c = 1.0 µm, 7.9.2).
    const half = 2.54 * (1 - Math.sqrt(0.05));
    const delta = 0.05;
    expect(result.valueUm).toBe(119.38);
    expect(result.coverageProbability).toBe(0.95);
    expect(result.fixedCoverageFactor).toBe(false);
    expect(result.method).toBe('monte-carlo');
    expect(Math.abs((result.expandedUncertaintyUm ?? Number.NaN) - half)).toBeLessThanOrEqual(delta);
    const [low, high] = result.intervalUm ?? [Number.NaN, Number.NaN];
    expect(Math.abs(low - (119.38 - half))).toBeLessThanOrEqual(delta);
    expect(Math.abs(high - (119.38 + half))).toBeLessThanOrEqual(delta);
  });

  it('is within spec against 0.003–0.005 in by the guarded rule, with the band in µm', () => {
    const result = ok(computeClearance({ terms: endFloat, spec: spec({ min: '0.003', max: '0.005', preferredMin: '0.004', preferredMax: '0.0045' }), coverageFactor: 2 }));
    // ISO 14253-1 guarded acceptance: 0.003 + U ≤ 0.0047 ≤ 0.005 − U with U ≈ 0.0000817 in.
    expect(result.verdict).toBe('conforms');
    expect(result.rule).toBe('guarded');
    // Preferred 0.004–0.0045 in: 0.0047 ≥ 0.0045 + U, so outside it (ISO 14253-1 guarded rejection).
    expect(result.preferredVerdict).toBe('does-not-conform');
    expect(result.rejectVerdict).toBeNull();
    // 0.003 in = 76.2 µm, 0.005 in = 127 µm, 0.004 in = 101.6 µm, 0.0045 in = 114.3 µm (× 25.4).
    expect(result.band).toEqual({ minUm: 76.2, maxUm: 127, preferredMinUm: 101.6, preferredMaxUm: 114.3, rejectUm: null });
  });

  it('is too close to call when the value is within U of a limit (ISO 14253-1 guarded rule)', () => {
    // 0.0047 in against max 0.00475 in: 0.00475 − U < 0.0047 < 0.00475 + U, U ≈ 0.0000817 in.
    expect(ok(computeClearance({ terms: endFloat, spec: spec({ min: '0.003', max: '0.00475' }), coverageFactor: 2 })).verdict).toBe('undecided');
    // The simple rule (ILAC-G8:09/2019 simple acceptance) compares the value alone.
    expect(ok(computeClearance({ terms: endFloat, spec: spec({ min: '0.003', max: '0.00475', rule: 'simple' }), coverageFactor: 2 })).verdict).toBe('conforms');
    // 0.0047 ≥ 0.0045 + U: out of spec.
    expect(ok(computeClearance({ terms: endFloat, spec: spec({ max: '0.0045' }), coverageFactor: 2 })).verdict).toBe('does-not-conform');
  });

  it('judges the reject limit by the same rule', () => {
    const result = ok(computeClearance({ terms: endFloat, spec: spec({ min: '0.002', max: '0.004', reject: '0.0047' }), coverageFactor: 2 }));
    expect(result.verdict).toBe('does-not-conform');
    // Exactly on the reject limit with U > 0: neither clear of it nor past it by U (ISO 14253-1).
    expect(result.rejectVerdict).toBe('undecided');
    expect(result.band?.rejectUm).toBe(119.38);
    expect(result.steps.join('\n')).toMatch(/Reject limit 0\.0047 in \(scrap at or above it\), same rule: too close to call against the reject limit/);
  });

  it('works in the spec unit when it differs from the readings', () => {
    const result = ok(computeClearance({ terms: endFloat, spec: spec({ unit: 'mm', min: '0.08', max: '0.13' }), coverageFactor: 2 }));
    expect(result.unit).toBe('mm');
    expect(result.verdict).toBe('conforms');
    expect(result.display).toMatch(/ mm \(.*k = 2(\.00)?\)$/);
  });
});

describe('computeClearance: a feeler gap', () => {
  it('is the midpoint of the bracket with u = a/√3 and U = k u', () => {
    const result = ok(
      computeClearance({ terms: [{ key: 'tip-gap', engine: { kind: 'bracket', passes: 0.003, stops: 0.004, unit: 'in' }, sign: 1 }], spec: null, coverageFactor: 3 }),
    );
    // Midpoint 0.0035 in = 88.9 µm; a = 0.0005 in = 12.7 µm; u = a/√3 (JCGM 100:2008, 4.3.7); U = 3u
    // with k reported as chosen (GUM 6.2.1).
    expect(result.valueUm).toBe(88.9);
    expect(result.standardUncertaintyUm).toBeCloseTo(12.7 / SQRT3, 12);
    expect(result.expandedUncertaintyUm).toBeCloseTo((3 * 12.7) / SQRT3, 12);
    expect(result.coverageFactor).toBe(3);
  });

  it('has a 95 % interval of ±0.95a when no k is chosen', () => {
    const result = ok(computeClearance({ terms: [{ key: 'tip-gap', engine: { kind: 'bracket', passes: '0.003', stops: '0.004', unit: 'in' }, sign: 1 }], spec: null, coverageFactor: null }));
    // Rectangular on ±a: the 95 % interval is ±0.95a = ±12.065 µm (GUM G.1.3; JCGM 101:2008 6.4.2),
    // to δ = 0.05 µm (u = 7.3 µm, JCGM 101:2008 7.9.2).
    expect(result.valueUm).toBe(88.9);
    expect(Math.abs((result.expandedUncertaintyUm ?? Number.NaN) - 0.95 * 12.7)).toBeLessThanOrEqual(0.05);
    expect(result.method).toBe('monte-carlo');
  });
});

describe('computeClearance: problems instead of figures', () => {
  it('says which reading the engine refuses', () => {
    const result = computeClearance({
      terms: [{ key: 'bad', engine: { kind: 'bracket', passes: 0.004, stops: 0.003, unit: 'in' }, sign: 1 }],
      spec: null,
      coverageFactor: 2,
    });
    expect(result).toEqual({ ok: false, problems: [expect.stringMatching(/^bad\.stops: stops must be thicker than passes/)] });
  });

  it('says when the spec figures do not hold together', () => {
    const result = computeClearance({ terms: endFloat, spec: spec({ min: '0.005', max: '0.003' }), coverageFactor: 2 });
    expect(result.ok).toBe(false);
    expect(!result.ok && result.problems[0]).toMatch(/^spec: min: min must not be greater than max/);
  });

  it('refuses a coverage factor outside 1–4 and a clearance with no terms', () => {
    expect(computeClearance({ terms: endFloat, spec: null, coverageFactor: 9 }).ok).toBe(false);
    expect(computeClearance({ terms: [], spec: null, coverageFactor: 2 }).ok).toBe(false);
  });
});

describe('clearance templates', () => {
  it('has one template per id, each explaining what is subtracted from what', () => {
    expect(clearanceTemplates.map((t) => t.id)).toEqual([...sumTemplateIds]);
    for (const t of clearanceTemplates) {
      expect(t.explanation.length).toBeGreaterThan(60);
      expect(t.suggestedKey).toMatch(/^[a-z][a-z0-9-]*$/);
    }
    const endFloatTemplate = clearanceTemplates.find((t) => t.id === 'end-float')!;
    expect(endFloatTemplate.slots.map((s) => [s.label, s.sign])).toEqual([
      ['Bore depth', 1],
      ['Rotor height', -1],
    ]);
    expect(clearanceTemplates.find((t) => t.id === 'bearing-clearance')!.slots.map((s) => s.sign)).toEqual([1, -1]);
    expect(clearanceTemplates.find((t) => t.id === 'material-removed')!.slots.map((s) => s.sign)).toEqual([1, -1]);
    expect(clearanceTemplates.find((t) => t.id === 'feeler-gap')!.slots).toHaveLength(1);
  });
});
