import { describe, expect, it } from 'vitest';
import { evaluateCalc } from '@shared/measure/calc';
import type { PublicClearance, PublicReading } from '@shared/public/public-story.schema';
import { bandText, exactText, readingResolutionPm, systemFigure } from '../../../src/features/public/lib/figures';
import { recomputeRequest } from '../../../src/features/public/lib/recompute';
import { micrometresToPicometres } from '@shared/measure/units';

/*
 * The reader's units: the engine's micrometres shown in in/thou or mm/µm. 1 in = 25.4 mm exactly
 * (NIST SP 811, appendix B.8). A computed result is written per GUM 7.2.6: the uncertainty to two
 * significant digits and the value to the same decimal place.
 */

// Two readings at 0.0001 in resolution, nothing else known: u = 2.54 µm / √12 each (rectangular
// distribution, GUM 4.3.7), u_c = √2 · u (GUM eq. 10), U = 2 u_c (GUM 6.2.1) = 2.0739 µm.
const U_TWO_READINGS_UM = 2 * Math.SQRT2 * (2.54 / Math.sqrt(12));

describe('a clearance in the reader’s system', () => {
  it('shows 0.0047 in ± U in inches and thou, and in millimetres and micrometres', () => {
    // 0.0047 in = 119.38 µm exactly; U = 2.0739 µm = 0.0000816 in = 0.00207 mm.
    const imperial = systemFigure(119.38, U_TWO_READINGS_UM, 'imperial');
    expect(imperial.main).toBe('0.004700 in ± 0.000082 in');
    expect(imperial.fine).toBe('4.700 thou ± 0.082 thou');
    const metric = systemFigure(119.38, U_TWO_READINGS_UM, 'metric');
    expect(metric.main).toBe('0.1194 mm ± 0.0021 mm');
    expect(metric.fine).toBe('119.4 µm ± 2.1 µm');
  });

  it('shows a reading at its resolution, not at its uncertainty’s place', () => {
    const resolution = readingResolutionPm({ kind: 'direct', unit: 'in', value: '0.5642', values: null });
    // 0.0001 in = 2.54 µm = 2 540 000 pm.
    expect(resolution).toBe(2_540_000n);
    // shared/measure/format.ts: a 0.0001 in reading shows 4 places in in, 3 in mm (14.331 mm), 1 in thou.
    const u = 2 * (2.54 / Math.sqrt(12));
    expect(systemFigure(14330.68, u, 'imperial', resolution).main).toBe('0.5642 in ± 0.000058 in');
    expect(systemFigure(14330.68, u, 'metric', resolution).main).toBe('14.331 mm ± 0.0015 mm');
    // The fine unit accompanies figures below one main unit only (shared/measure/format.ts,
    // showsFineUnit): 0.5642 in is under an inch, but 14.331 mm is never written "14331 µm".
    expect(systemFigure(14330.68, u, 'imperial', resolution).fine).toBe('564.2 thou ± 0.058 thou');
    expect(systemFigure(14330.68, u, 'metric', resolution).fine).toBeNull();
  });

  it('takes the resolution from the engine input when the publication carries it, and none for a feeler bracket', () => {
    expect(readingResolutionPm({ kind: 'direct', unit: 'mm', value: '25.40', values: null, engine: { kind: 'direct', unit: 'mm', resolution: 0.001 } })).toBe(1_000_000n);
    expect(readingResolutionPm({ kind: 'repeated', unit: 'mm', value: null, values: ['25.402', '25.404'] })).toBe(1_000_000n);
    expect(readingResolutionPm({ kind: 'bracket', unit: 'in', value: null, values: null })).toBeNull();
  });

  it('writes spec limits as the spec wrote them, and converted at the places they support', () => {
    const band = (minUm: number | null, maxUm: number | null) => ({ minUm, maxUm, preferredMinUm: null, preferredMaxUm: null, rejectUm: null });
    // 0.003 in = 76.2 µm and 0.005 in = 127 µm exactly (1 in = 25.4 mm, NIST SP 811 B.8).
    expect(bandText(band(76.2, 127), 'in', 'in')).toBe('0.003–0.005 in');
    // Whole thou convert to steps of 0.01 mm (NIST SP 811 B.7.2), shown to 0.001 mm across systems
    // (a limit is not shown coarser than the figures judged against it; common practice, no published source).
    expect(bandText(band(76.2, 127), 'in', 'mm')).toBe('0.076–0.127 mm');
    // 0.0015–0.0040 in = 0.0381–0.1016 mm exactly; 0.0001 in = 0.00254 mm, so steps of 0.001 mm (B.7.2).
    expect(bandText(band(38.1, 101.6), 'in', 'mm')).toBe('0.038–0.102 mm');
    expect(bandText(band(38.1, 101.6), 'in', 'in')).toBe('0.0015–0.0040 in');
    expect(bandText(band(null, 127), 'in', 'thou')).toBe('at most 5 thou');
    expect(exactText(micrometresToPicometres(25400), 'in')).toBe('1');
  });
});

describe('recompute', () => {
  const reading = (key: string, value: number): PublicReading =>
    ({
      key,
      engine: { kind: 'direct', value, unit: 'in', resolution: 0.0001 },
    }) as PublicReading;
  const clearance = {
    unit: 'in',
    coverageFactor: 2,
    rule: 'guarded',
    band: { minUm: 76.2, maxUm: 127, preferredMinUm: null, preferredMaxUm: null, rejectUm: null },
    terms: [
      { readingId: 1, readingKey: 'bore-depth', readingName: 'Bore depth', sign: 1 },
      { readingId: 2, readingKey: 'rotor-height', readingName: 'Rotor height', sign: -1 },
    ],
  } as unknown as PublicClearance;

  it('rebuilds the calculator request of a published clearance, limits back in the spec’s unit, and the engine gives the published figure', () => {
    const request = recomputeRequest([reading('bore-depth', 0.5642), reading('rotor-height', 0.5595)], clearance);
    expect(request).not.toBeNull();
    expect(request!.spec).toEqual({ unit: 'in', min: 0.003, max: 0.005, rule: 'guarded' });
    expect(request!.terms).toEqual([
      { reading: 'bore-depth', sign: 1 },
      { reading: 'rotor-height', sign: -1 },
    ]);
    const result = evaluateCalc(request!);
    // 0.5642 in − 0.5595 in = 0.0047 in = 119.38 µm (exact decimal arithmetic).
    expect(result.valuePm).toBe(119_380_000n);
    expect(result.expandedUncertaintyUm).toBeCloseTo(U_TWO_READINGS_UM, 9);
    // 0.0047 ± 0.000082 in lies at least U inside 0.003–0.005 in: within spec by the guarded rule (ISO 14253-1).
    expect(result.judgement?.verdict).toBe('conforms');
  });

  it('refuses to make a request when a reading’s engine input was not published', () => {
    expect(recomputeRequest([{ key: 'bore-depth' } as PublicReading, reading('rotor-height', 0.5595)], clearance)).toBeNull();
  });
});
