import type { Clearance, ClearanceResult } from '@shared/clearances/clearance.schema';
import { resultFigures } from '@shared/clearances/result-figures';
import { withUnit } from '@shared/measure/format-quantity';
import type { AnyUnit } from '@shared/measure/quantities';
import { guardedLimits, type BandPm } from '@shared/measure/spec';
import { isLengthUnit, maxExactDecimals, micrometresToPicometres, picometresPerUnit, type LengthUnit } from '@shared/measure/units';
import type { BandPictureProps, ResultBandPictureProps } from '@/features/calc/components/band-picture';

/** "bore-depth − rotor-height" from a clearance's signed terms. */
export function expressionOf(terms: readonly { readingKey: string; sign: 1 | -1 }[]): string {
  return terms.map((t, i) => `${t.sign === -1 ? '− ' : i === 0 ? '' : '+ '}${t.readingKey}`).join(' ');
}

/** How a result is worked out, in a line: its formula as written, or its signed sum of reading keys. */
export function modelText(clearance: { formula: string | null; terms: readonly { readingKey: string; sign: 1 | -1 }[] }): string {
  return clearance.formula ?? expressionOf(clearance.terms);
}

/**
 * What each name of a formula stands for: the readings ("chamber: Chamber, head 1 (chamber-1)")
 * and the constants ("target: 3.990 in"). Empty for a signed sum, whose terms are reading keys.
 */
export function formulaLegend(clearance: Pick<Clearance, 'formula' | 'terms' | 'constants'>): { name: string; meaning: string; reading: boolean }[] {
  if (clearance.formula === null) return [];
  return [
    ...clearance.terms.map((t) => ({
      name: t.symbol ?? t.readingKey,
      meaning: t.symbol === null || t.symbol === t.readingKey ? t.readingName : `${t.readingName} (${t.readingKey})`,
      reading: true,
    })),
    ...Object.entries(clearance.constants).map(([name, c]) => ({ name, meaning: formatConstant(c), reading: false })),
  ];
}

/** A constant as stored, with its unit: "3.990 in", "180°". */
function formatConstant(c: { value: string | number; unit: AnyUnit }): string {
  return withUnit(String(c.value).replace(/^-/, '−'), c.unit);
}

/**
 * Is this a length result with its µm figures (the length path: band picture in picometres,
 * imperial and metric units)? Any other quantity goes by its figures in its own unit.
 */
export function isLengthResult(
  result: Pick<ClearanceResult, 'quantity' | 'unit' | 'valueUm' | 'expandedUncertaintyUm'>,
): result is typeof result & { unit: LengthUnit; valueUm: number; expandedUncertaintyUm: number } {
  return (result.quantity ?? 'length') === 'length' && isLengthUnit(result.unit) && result.valueUm !== null && result.expandedUncertaintyUm !== null;
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

/** Decimal places a double needs as written (shortest round trip), at most 12: a spec limit 10.6 → 1. */
function decimalsOfNumber(n: number): number {
  if (!Number.isFinite(n)) return 0;
  const text = String(Math.abs(n));
  if (text.includes('e')) return 12;
  return Math.min(12, text.split('.')[1]?.length ?? 0);
}

const pmOf = (um: number | null): bigint | undefined => (um === null ? undefined : micrometresToPicometres(um));

function bandOf(min: number | null, max: number | null): BandPm {
  const minPm = pmOf(min);
  const maxPm = pmOf(max);
  return { ...(minPm !== undefined && { minPm }), ...(maxPm !== undefined && { maxPm }) };
}

/** A reading as the band picture's scale reads it: its unit and its display. */
type ScaleReading = { unit: AnyUnit; result: { display: string } };

/**
 * The band picture's props for a worked-out length clearance with a spec, or null without one
 * (or for another quantity: see `resultBandPictureProps`). The guarded limits are the engine's
 * own (`guardedLimits`) at the result's U and rule. The scale is labelled to the places of the
 * readings (when they are in the result's unit) and the spec.
 */
export function bandPictureProps(result: ClearanceResult, readings: readonly ScaleReading[] = []): BandPictureProps | null {
  if (!result.band || !result.verdict || !result.rule || !isLengthResult(result)) return null;
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

/**
 * The band picture of a result of any other quantity (a ratio, a volume, an angle), from its
 * figures and the spec's limits in its own unit (`bandInUnit`); null without a spec or for a
 * length (which keeps `bandPictureProps`). The guarded limits are where `judgeInterval` puts the
 * verdict's edges: a limit moved inward by the interval's reach on that side (ISO 14253-1).
 */
export function resultBandPictureProps(result: ClearanceResult, readings: readonly ScaleReading[] = []): ResultBandPictureProps | null {
  const b = result.bandInUnit;
  if (!b || !result.verdict || !result.rule || isLengthResult(result)) return null;
  const { value, expandedUncertainty, interval } = resultFigures(result);
  const below = result.rule === 'guarded' ? value - interval[0] : 0;
  const above = result.rule === 'guarded' ? interval[1] - value : 0;
  const limits = {
    ...(b.min !== null && { acceptMin: b.min + below, rejectBelow: b.min - above }),
    ...(b.max !== null && { acceptMax: b.max - above, rejectAbove: b.max + below }),
  };
  // Asymmetric exactly when the engine's own text says so: `resultText` writes an interval's ends
  // instead of ± U when its sides differ by more than the numerical tolerance of u (JCGM 101:2008
  // 7.9.2), so a Monte Carlo interval that confirms ± U is drawn as ± U.
  const asymmetric = !result.display.includes(' ± ');
  const sameUnit = readings.length > 0 && readings.every((r) => r.unit === result.unit);
  const valueDecimals = sameUnit ? Math.max(...readings.map((r) => decimalsOfDisplay(r.result.display))) : decimalsOfDisplay(result.display);
  const limitDecimals = [b.min, b.max, b.preferredMin, b.preferredMax, b.reject].filter((x): x is number => x !== null).map(decimalsOfNumber);
  return {
    unit: result.unit,
    decimals: Math.max(valueDecimals, ...limitDecimals),
    band: {
      ...(b.min !== null && { min: b.min }),
      ...(b.max !== null && { max: b.max }),
      ...(b.preferredMin !== null && { preferredMin: b.preferredMin }),
      ...(b.preferredMax !== null && { preferredMax: b.preferredMax }),
      ...(b.reject !== null && { reject: b.reject }),
    },
    value,
    interval,
    asymmetric,
    coverageFactor: result.coverageFactor,
    coverageProbability: result.coverageProbability ?? (expandedUncertainty > 0 ? 0.95 : 1),
    limits,
    verdict: result.verdict,
    rule: result.rule,
  };
}

/** The spec a clearance was judged against, in one line: "Oil pump end float · v2 · manual: …". */
export function specLine(spec: NonNullable<Clearance['spec']>): string {
  return `${spec.name} · v${spec.version}`;
}

