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
    expect(byMaterial.steps.join('\n')).toMatch(/α = 11\.7×10⁻⁶\/K \(Carbon steel, typical handbook figure \(Callister, Table B\.6\)\)/);
    expect(byMaterial.steps.join('\n')).toMatch(/the instrument taken to be at 20 °C .*corrected to 20 °C \(ISO 1, GUM H\.1\)/);
  });
});

/** L20 = L·(1 + α_s(t_s − 20))/(1 + α(t − 20)) (GUM H.1) in exact decimal arithmetic, µm. */
function refereeWithInstrument(lengthMm: string, alpha: string, t: string, alphaS: string, tS: string): number {
  const num = big.add(1, big.multiply(big.bignumber(alphaS), big.subtract(big.bignumber(tS), 20))) as never;
  const den = big.add(1, big.multiply(big.bignumber(alpha), big.subtract(big.bignumber(t), 20))) as never;
  const l20 = big.divide(big.multiply(big.bignumber(lengthMm), num) as never, den) as unknown as { toString(): string };
  return Number(l20.toString()) * 1000;
}

describe('correction with the instrument\'s temperature and expansion (GUM H.1)', () => {
  const reading = (over: Record<string, unknown>) => ({ kind: 'direct', value: 100, unit: 'mm', resolution: 0.001, instrument: 'mic', ...over });
  const calc = (r: Record<string, unknown>, mic: Record<string, unknown>) =>
    computeCalc({ readings: { d: r }, instruments: { mic }, terms: [{ reading: 'd', sign: 1 }] });

  it('needs no correction when a steel part and a steel instrument share a temperature', () => {
    // α_s(t_s − 20) = α(t − 20), so L20 = L (GUM H.1: only the difference in expansion matters).
    // The instrument's α_s is carbon steel's 11.7×10⁻⁶/K when not given (Callister Table B.6).
    const result = calc(reading({ temperatureC: 25, material: 'steel' }), { temperatureC: 25 });
    expect(result.value_um).toBeCloseTo(100_000, 6);
  });

  it('corrects an aluminium part at 30 °C read with a steel instrument at 25 °C', () => {
    // L20 = 100 mm × (1 + 11.7e-6 × 5)/(1 + 23.6e-6 × 10) (GUM H.1; α from Callister Table B.6).
    const result = calc(reading({ temperatureC: 30, material: 'aluminium-alloy' }), { temperatureC: 25 });
    expect(result.value_um).toBeCloseTo(refereeWithInstrument('100', '23.6e-6', '30', '11.7e-6', '25'), 6);
    // An explicit instrument coefficient takes the place of carbon steel's.
    const invarish = calc(reading({ temperatureC: 30, material: 'aluminium-alloy' }), { temperatureC: 25, expansionPerK: 1.5e-6 });
    expect(invarish.value_um).toBeCloseTo(refereeWithInstrument('100', '23.6e-6', '30', '1.5e-6', '25'), 6);
  });

  it('adds the part temperature\'s uncertainty through ∂L20/∂t', () => {
    // ∂L20/∂t = −L20·α/(1 + α(t − 20)) (GUM H.1, eq. 10 with c_t = ∂f/∂t); u(t) = 0.5 K. The
    // resolution's 1/(2√3) µm is scaled by ∂L20/∂L = 1/(1 + α(t − 20)) (instrument at 20 °C).
    const alpha = 11.7e-6;
    const result = computeCalc({
      readings: { d: { kind: 'direct', value: 100, unit: 'mm', resolution: 0.001, temperatureC: 30, temperatureUncertaintyC: 0.5, material: 'steel' } },
      terms: [{ reading: 'd', sign: 1 }],
    });
    const factor = 1 / (1 + alpha * 10);
    const l20Um = 100_000 * factor;
    const uT = (l20Um * alpha * 0.5) / (1 + alpha * 10);
    const uRes = factor / (2 * Math.sqrt(3));
    expect(result.standardUncertainty_um).toBeCloseTo(Math.hypot(uT, uRes), 9);
  });
});
