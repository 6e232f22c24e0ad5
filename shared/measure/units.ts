/**
 * Length units and the canonical unit, the integer picometre.
 *
 * Why integer picometres held as bigint: 1 in = 25.4 mm exactly (NIST SP 811, appendix B), so an
 * inch value with d decimal places is m × 254 × 10^(8−d) pm — an integer for d ≤ 8. Every
 * millimetre value up to 9 places, micrometre value up to 6 places, thou up to 5 and tenth up to 4
 * is likewise a whole number of picometres. Sums, differences and unit changes are then integer
 * arithmetic with no drift at all, and nothing a workshop instrument can resolve (a tenth is
 * 2 540 000 pm) is anywhere near the quantum. Bigint rather than number so that sums of many
 * terms and the squares used for standard deviations stay exact too. Quantities that cannot be
 * exact (a mean of three values, a thermal correction) are rounded once, half-even, to the
 * nearest picometre — 10⁻⁶ µm, six orders below the finest resolution in the trade.
 * Uncertainties are estimates quoted to two significant digits (GUM 7.2.6), so they are ordinary
 * numbers in micrometres.
 */
import { divideRounded, type ExactDecimal } from './decimal';

/** The length units Benchproof reads and writes. `tenth` is a tenth of a thou, 0.0001 in. */
export const lengthUnits = ['in', 'thou', 'tenth', 'mm', 'um'] as const;

/** A length unit code as stored and sent over the API. */
export type LengthUnit = (typeof lengthUnits)[number];

/** Picometres in one of each unit, exactly (1 in = 25.4 mm, NIST SP 811 appendix B). */
export const picometresPerUnit: Readonly<Record<LengthUnit, bigint>> = {
  in: 25_400_000_000n,
  thou: 25_400_000n,
  tenth: 2_540_000n,
  mm: 1_000_000_000n,
  um: 1_000_000n,
};

function trailingZeros(value: bigint): number {
  let count = 0;
  let rest = value;
  while (rest % 10n === 0n) {
    rest /= 10n;
    count += 1;
  }
  return count;
}

/**
 * The most decimal places a value in each unit may carry and still be a whole number of
 * picometres: in 8, thou 5, tenth 4, mm 9, um 6. More than that is refused rather than rounded,
 * so that a stored value is always exactly what was entered.
 */
export const maxExactDecimals: Readonly<Record<LengthUnit, number>> = {
  in: trailingZeros(picometresPerUnit.in),
  thou: trailingZeros(picometresPerUnit.thou),
  tenth: trailingZeros(picometresPerUnit.tenth),
  mm: trailingZeros(picometresPerUnit.mm),
  um: trailingZeros(picometresPerUnit.um),
};

/** The largest length magnitude accepted anywhere: 2 m, well past any engine part. */
export const MAX_LENGTH_PM = 2_000_000_000_000n;

/** Symbols for display. `tenths` reads better than `tenth` after any number but exactly 1. */
export const unitSymbols: Readonly<Record<LengthUnit, string>> = {
  in: 'in',
  thou: 'thou',
  tenth: 'tenths',
  mm: 'mm',
  um: 'µm',
};

/** Plain names, for messages and labels. */
export const unitNames: Readonly<Record<LengthUnit, string>> = {
  in: 'inches',
  thou: 'thou (0.001 in)',
  tenth: 'tenths (0.0001 in)',
  mm: 'millimetres',
  um: 'micrometres',
};

/** A unit as a label says it once: "inches (in)", "millimetres (mm)", "thou (0.001 in)". */
export function unitLabel(unit: LengthUnit): string {
  const name = unitNames[unit];
  return name.includes('(') ? name : `${name} (${unitSymbols[unit]})`;
}

/** Type guard for a unit code. */
export function isLengthUnit(value: unknown): value is LengthUnit {
  return typeof value === 'string' && (lengthUnits as readonly string[]).includes(value);
}

/**
 * Converts an exact decimal in `unit` to integer picometres, or null when it has more decimal
 * places than `maxExactDecimals[unit]` (the result would not be a whole picometre).
 */
export function decimalToPicometres(decimal: ExactDecimal, unit: LengthUnit): bigint | null {
  const product = decimal.coefficient * picometresPerUnit[unit];
  const divisor = 10n ** BigInt(decimal.scale);
  if (product % divisor !== 0n) return null;
  return product / divisor;
}

/** One step of the last decimal place of `decimal`, in picometres (e.g. "0.5640 in" → 0.0001 in). */
export function lastPlacePicometres(decimal: ExactDecimal, unit: LengthUnit): bigint | null {
  return decimalToPicometres({ coefficient: 1n, scale: decimal.scale }, unit);
}

/** Picometres to micrometres as a number. Exact to the nearest double for |pm| < 2^53. */
export function picometresToMicrometres(pm: bigint): number {
  return Number(pm) / 1e6;
}

/** Micrometres (an uncertainty, say) to the nearest whole picometre. */
export function micrometresToPicometres(um: number): bigint {
  return BigInt(Math.round(um * 1e6));
}

/** Picometres to a number in `unit` (for drawing and for ratios, not for stored values). */
export function picometresToUnitNumber(pm: bigint, unit: LengthUnit): number {
  return Number(pm) / Number(picometresPerUnit[unit]);
}

/** Micrometres to a number in `unit` (for uncertainties shown in the reader's unit). */
export function micrometresToUnitNumber(um: number, unit: LengthUnit): number {
  return (um * 1e6) / Number(picometresPerUnit[unit]);
}

/** Rounds picometres to a whole number of `step` picometres, half-even. */
export function roundToStep(pm: bigint, step: bigint): bigint {
  return divideRounded(pm, step, 'half-even') * step;
}
