/**
 * A clearance as a signed sum of readings (bore depth − component height, say), and the
 * per-size figure some specs ask for (clearance per inch, or per 25 mm, of a diameter).
 */
import type { EvaluatedReading } from './readings';
import { combineInQuadrature } from './uncertainty';
import { picometresToMicrometres } from './units';

/** A reading taken with a sign into a clearance. */
export interface SignedReading {
  readonly reading: EvaluatedReading;
  readonly sign: 1 | -1;
}

/** The value and combined standard uncertainty of a signed sum. */
export interface SumResult {
  /** Exact signed sum, integer picometres. */
  readonly valuePm: bigint;
  /** Combined standard uncertainty u_c, µm. */
  readonly standardUncertaintyUm: number;
  /** The finest display step among the terms. */
  readonly displayStepPm: bigint;
}

/**
 * Y = Σ s_i X_i with s_i = ±1. The value is exact; u_c² = Σ u²(x_i) by GUM eq. (10), which
 * assumes the readings are uncorrelated (so each reading may appear once).
 */
export function sumReadings(terms: readonly SignedReading[]): SumResult {
  let valuePm = 0n;
  let displayStepPm: bigint | undefined;
  for (const { reading, sign } of terms) {
    valuePm += sign === 1 ? reading.valuePm : -reading.valuePm;
    if (displayStepPm === undefined || reading.displayStepPm < displayStepPm) displayStepPm = reading.displayStepPm;
  }
  return {
    valuePm,
    standardUncertaintyUm: combineInQuadrature(terms.map((t) => t.reading.standardUncertaintyUm)),
    displayStepPm: displayStepPm ?? 1n,
  };
}

/** A per-size figure: the clearance for each inch (or each 25 mm) of a diameter. */
export interface PerSizeFigure {
  /** Clearance ÷ diameter, dimensionless (0.001 means 0.001 in per inch, or 0.025 mm per 25 mm). */
  readonly ratio: number;
  /** Standard uncertainty of the ratio. */
  readonly ratioUncertainty: number;
  /** Clearance per inch of diameter, µm. */
  readonly perInchUm: number;
  /** Clearance per 25 mm of diameter, µm (note: 25 mm, not 25.4 mm). */
  readonly per25mmUm: number;
}

/**
 * Clearance per unit of diameter, r = c/d, with u(r) from GUM eq. (10) using the sensitivity
 * coefficients ∂r/∂c = 1/d and ∂r/∂d = −c/d² (uncorrelated). Null when the diameter is not
 * positive.
 */
export function perSize(
  clearance: { valuePm: bigint; standardUncertaintyUm: number },
  diameter: { valuePm: bigint; standardUncertaintyUm: number },
): PerSizeFigure | null {
  if (diameter.valuePm <= 0n) return null;
  const c = picometresToMicrometres(clearance.valuePm);
  const d = picometresToMicrometres(diameter.valuePm);
  const ratio = c / d;
  const ratioUncertainty = combineInQuadrature([
    clearance.standardUncertaintyUm / d,
    (c * diameter.standardUncertaintyUm) / (d * d),
  ]);
  return { ratio, ratioUncertainty, perInchUm: ratio * 25_400, per25mmUm: ratio * 25_000 };
}
