import type { Clearance, ClearanceResult } from '@shared/clearances/clearance.schema';
import { guardedLimits, type BandPm } from '@shared/measure/spec';
import { maxExactDecimals, micrometresToPicometres, picometresPerUnit, type LengthUnit } from '@shared/measure/units';
import type { BandPictureProps } from '@/features/calc/components/band-picture';

/** "bore-depth − rotor-height" from a clearance's signed terms. */
export function expressionOf(terms: readonly { readingKey: string; sign: 1 | -1 }[]): string {
  return terms.map((t, i) => `${t.sign === -1 ? '− ' : i === 0 ? '' : '+ '}${t.readingKey}`).join(' ');
}

/** Fewest decimal places that show `pm` exactly in `unit` (a spec limit as it was written). */
function exactDecimals(pm: bigint, unit: LengthUnit): number {
  const per = picometresPerUnit[unit];
  for (let d = 0; d <= maxExactDecimals[unit]; d += 1) if ((pm * 10n ** BigInt(d)) % per === 0n) return d;
  return maxExactDecimals[unit];
}

/** Decimal places of the first number in a display text ("0.0047 in ± …" → 4). */
function decimalsOfDisplay(display: string): number {
  const match = /\d+(?:\.(\d+))?/.exec(display);
  return match?.[1]?.length ?? 0;
}

const pmOf = (um: number | null): bigint | undefined => (um === null ? undefined : micrometresToPicometres(um));

function bandOf(min: number | null, max: number | null): BandPm {
  const minPm = pmOf(min);
  const maxPm = pmOf(max);
  return { ...(minPm !== undefined && { minPm }), ...(maxPm !== undefined && { maxPm }) };
}

/**
 * The band picture's props for a worked-out clearance with a spec, or null without one. The
 * guarded limits are the engine's own (`guardedLimits`) at the result's U and rule. The scale
 * is labelled to the places of the readings (when they are in the result's unit) and the spec.
 */
export function bandPictureProps(result: ClearanceResult, readings: readonly { unit: LengthUnit; result: { display: string } }[] = []): BandPictureProps | null {
  if (!result.band || !result.verdict || !result.rule) return null;
  const unit = result.unit;
  const band = bandOf(result.band.minUm, result.band.maxUm);
  const preferred =
    result.band.preferredMinUm === null && result.band.preferredMaxUm === null
      ? null
      : bandOf(result.band.preferredMinUm ?? result.band.minUm, result.band.preferredMaxUm ?? result.band.maxUm);
  const rejectPm = pmOf(result.band.rejectUm) ?? null;
  const valuePm = micrometresToPicometres(result.valueUm);
  const expandedPm = micrometresToPicometres(result.expandedUncertaintyUm);
  const limitDecimals = [band.minPm, band.maxPm, preferred?.minPm, preferred?.maxPm, rejectPm]
    .filter((p): p is bigint => p !== undefined && p !== null)
    .map((p) => exactDecimals(p, unit));
  const sameUnit = readings.length > 0 && readings.every((r) => r.unit === unit);
  const valueDecimals = sameUnit ? Math.max(...readings.map((r) => decimalsOfDisplay(r.result.display))) : decimalsOfDisplay(result.display);
  return {
    unit,
    decimals: Math.max(valueDecimals, ...limitDecimals),
    valuePm,
    expandedPm,
    coverageFactor: result.coverageFactor,
    band,
    preferred,
    rejectPm,
    limits: guardedLimits(band, expandedPm, result.rule),
    verdict: result.verdict,
    rule: result.rule,
  };
}

/** The spec a clearance was judged against, in one line: "Oil pump end float · v2 · manual: …". */
export function specLine(spec: NonNullable<Clearance['spec']>): string {
  return `${spec.name} · v${spec.version}`;
}
