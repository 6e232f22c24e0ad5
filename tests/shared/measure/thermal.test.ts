import { all, create } from 'mathjs';
import { describe, expect, it } from 'vitest';
import { computeCalc } from '@shared/measure/calc';
import {
  correctToReference,
  lookupMaterial,
  materialExpansion,
  referenceCorrectionFactor,
  REFERENCE_TEMPERATURE_C,
} from '@shared/measure/thermal';
import { picometresPerUnit } from '@shared/measure/units';

const big = create(all ?? {}, { number: 'BigNumber', precision: 64 });

/** L20 = L_t / (1 + α (t − 20)) in exact decimal arithmetic, rounded to the picometre. */
function referee(pm: bigint, alpha: string, t: string): bigint {
  const denominator = big.add(1, big.multiply(big.bignumber(alpha), big.subtract(big.bignumber(t), 20))) as never;
  const exact = big.divide(big.bignumber(pm.toString()), denominator) as unknown as { toFixed(n: number): string };
  return BigInt(exact.toFixed(0));
}

describe('correction to the 20 °C reference temperature', () => {
  it('uses 20 °C as the reference', () => {
    // ISO 1: the standard reference temperature for geometrical product specification is 20 °C.
    expect(REFERENCE_TEMPERATURE_C).toBe(20);
    expect(correctToReference(123_456_789n, 11.7e-6, 20)).toBe(123_456_789n);
  });

  it('carries the handbook coefficients it cites', () => {
    // Callister & Rethwisch, Fundamentals of Materials Science and Engineering, Appendix B,
    // Table B.6 (room-temperature linear CTE, 10⁻⁶/°C): steel 1020 11.7, grey iron G3000 11.4,
    // aluminium 6061 23.6, cast aluminium 356.0 21.5, bearing bronze C93200 18.0,
    // cartridge brass C26000 19.9 — transcribed from a reproduction of the table.
    expect(materialExpansion.steel.expansionPerK).toBe(11.7e-6);
    expect(materialExpansion['cast-iron'].expansionPerK).toBe(11.4e-6);
    expect(materialExpansion['aluminium-alloy'].expansionPerK).toBe(23.6e-6);
    expect(materialExpansion['cast-aluminium-alloy'].expansionPerK).toBe(21.5e-6);
    expect(materialExpansion.bronze.expansionPerK).toBe(18.0e-6);
    expect(materialExpansion.brass.expansionPerK).toBe(19.9e-6);
  });

  it('corrects 100 mm of carbon steel measured at 30 °C to within a picometre of exact arithmetic', () => {
    // α = 11.7×10⁻⁶/K (Callister Table B.6, AISI 1020); L20 = 100 mm / 1.000117 (ISO 1 correction,
    // exact form) = 99.9883013687… mm (series 1 − x + x² with x = 1.17e-4), checked with mathjs BigNumber.
    const pm = 100n * picometresPerUnit.mm;
    const ours = correctToReference(pm, materialExpansion.steel.expansionPerK, 30);
    const expected = referee(pm, '11.7e-6', '30');
    expect(ours - expected).toBeGreaterThanOrEqual(-1n);
    expect(ours - expected).toBeLessThanOrEqual(1n);
    expect(Number(ours) / 1e9).toBeCloseTo(99.9883013687, 9);
  });

  it('corrects a 4.0000 in grey-iron bore measured at 30 °C by about half a thou', () => {
    // α = 11.4×10⁻⁶/K (Callister Table B.6, grey iron G3000): 4 in × 11.4e-6 × 10 K ≈ 0.000456 in.
    const pm = 4n * picometresPerUnit.in;
    const corrected = correctToReference(pm, materialExpansion['cast-iron'].expansionPerK, 30);
    expect(corrected - referee(pm, '11.4e-6', '30')).toBeGreaterThanOrEqual(-1n);
    expect(corrected - referee(pm, '11.4e-6', '30')).toBeLessThanOrEqual(1n);
    expect(Number(pm - corrected) / Number(picometresPerUnit.in)).toBeCloseTo(0.000456, 6);
  });

  it('differs from the first-order form L_t (1 − α Δt) only by about L α² Δt²', () => {
    // Series expansion of 1/(1 + x) = 1 − x + x² − …; the difference is L x² to first order.
    const alpha = materialExpansion['aluminium-alloy'].expansionPerK;
    const lengthMm = 90;
    const exact = lengthMm * referenceCorrectionFactor(alpha, 35);
    const firstOrder = lengthMm * (1 - alpha * 15);
    const x = alpha * 15;
    // The next term is −L x³, so the ratio is 1 − x ≈ 0.99965.
    expect(Math.abs(exact - firstOrder) / (lengthMm * x * x)).toBeCloseTo(1 - x, 6);
  });

  it('finds materials by their common names', () => {
    expect(lookupMaterial('Cast iron')).toBe('cast-iron');
    expect(lookupMaterial('aluminum')).toBe('aluminium-alloy');
    expect(lookupMaterial('unobtainium')).toBeUndefined();
  });

  it('applies the correction inside a reading, an explicit coefficient taking precedence over the material', () => {
    const reading = { kind: 'direct', value: 100, unit: 'mm', resolution: 0.001, temperatureC: 30 } as const;
    const byMaterial = computeCalc({ readings: { d: { ...reading, material: 'steel' } }, terms: [{ reading: 'd', sign: 1 }] });
    const explicit = computeCalc({
      readings: { d: { ...reading, material: 'steel', expansionPerK: 23.6e-6 } },
      terms: [{ reading: 'd', sign: 1 }],
    });
    // 100 mm / 1.000117 and 100 mm / 1.000236 (exact form), computed by the BigNumber referee above.
    expect(byMaterial.value_um).toBeCloseTo(Number(referee(100n * picometresPerUnit.mm, '11.7e-6', '30')) / 1e6, 6);
    expect(explicit.value_um).toBeCloseTo(Number(referee(100n * picometresPerUnit.mm, '23.6e-6', '30')) / 1e6, 6);
    expect(byMaterial.steps.join('\n')).toMatch(/corrected to 20 °C.*Callister/);
  });
});
