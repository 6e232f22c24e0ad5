/**
 * The per-size figure some specs ask for: a clearance per inch, or per 25 mm, of a diameter.
 */
import { combineInQuadrature } from './uncertainty';
import { picometresToMicrometres } from './units';

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
  clearance: { valuePm: bigint | null; standardUncertaintyUm: number | null },
  diameter: { valuePm: bigint | null; standardUncertaintyUm: number | null },
): PerSizeFigure | null {
  if (clearance.valuePm === null || clearance.standardUncertaintyUm === null) return null;
  if (diameter.valuePm === null || diameter.standardUncertaintyUm === null || diameter.valuePm <= 0n) return null;
  const c = picometresToMicrometres(clearance.valuePm);
  const d = picometresToMicrometres(diameter.valuePm);
  const ratio = c / d;
  const ratioUncertainty = combineInQuadrature([
    clearance.standardUncertaintyUm / d,
    (c * diameter.standardUncertaintyUm) / (d * d),
  ]);
  return { ratio, ratioUncertainty, perInchUm: ratio * 25_400, per25mmUm: ratio * 25_000 };
}
