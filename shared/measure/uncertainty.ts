/**
 * Standard uncertainty, the JCGM 100:2008 (GUM) way. All inputs and outputs here are ordinary
 * numbers in one length unit (the engine uses micrometres); exact values live in picometres.
 */

/**
 * Standard uncertainty of a rectangular (uniform) distribution of half-width `a`: u = a/√3
 * (GUM 4.3.7, eq. 7).
 */
export function rectangularStandardUncertainty(halfWidth: number): number {
  return halfWidth / Math.sqrt(3);
}

/**
 * Standard uncertainty from an indicating instrument's resolution δx: the reading could be
 * anywhere within ±δx/2, rectangular, so u = δx/(2√3) (GUM F.2.2.1).
 */
export function resolutionStandardUncertainty(resolution: number): number {
  return rectangularStandardUncertainty(resolution / 2);
}

/**
 * Combined standard uncertainty of a sum or difference of uncorrelated inputs: GUM eq. (10),
 * u_c² = Σ c_i² u²(x_i), with sensitivity coefficients c_i = ±1 so c_i² = 1. Math.hypot avoids
 * overflow and returns |u| exactly for a single input.
 */
export function combineInQuadrature(uncertainties: readonly number[]): number {
  return Math.hypot(...uncertainties);
}

/**
 * Type A standard uncertainty of the mean of n ≥ 2 observations given as integer picometres:
 * u(x̄) = s/√n with s² = Σ(x − x̄)²/(n − 1) (GUM 4.2.2, 4.2.3). Σ(x − x̄)² is computed exactly as
 * (nΣx² − (Σx)²)/n in bigint, so only the final square root is rounded. Returns picometres.
 */
export function typeAUncertaintyOfMeanPm(valuesPm: readonly bigint[]): { sPm: number; uPm: number } {
  const n = BigInt(valuesPm.length);
  if (n < 2n) throw new RangeError('typeAUncertaintyOfMeanPm needs at least two values');
  let sum = 0n;
  let sumOfSquares = 0n;
  for (const x of valuesPm) {
    sum += x;
    sumOfSquares += x * x;
  }
  const nTimesSquaredDeviations = n * sumOfSquares - sum * sum; // = n · Σ(x − x̄)², exact, ≥ 0
  const variance = Number(nTimesSquaredDeviations) / Number(n * (n - 1n));
  const sPm = Math.sqrt(variance);
  return { sPm, uPm: sPm / Math.sqrt(Number(n)) };
}

/** Expanded uncertainty U = k · u_c (GUM 6.2.1). */
export function expandedUncertainty(combinedStandardUncertainty: number, coverageFactor: number): number {
  return coverageFactor * combinedStandardUncertainty;
}

/** The coverage factor used when none is chosen: k = 2, about 95 % for a normal distribution (GUM 6.3.3). */
export const DEFAULT_COVERAGE_FACTOR = 2;
