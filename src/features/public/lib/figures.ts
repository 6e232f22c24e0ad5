import { formatLength, formatNumber, formatResult, formatUncertainty, limitDecimals, showsFineUnit, symbolFor, systemOf, type UnitSystem } from '@shared/measure/format';
import { convertNumber, unitTable, type AnyUnit, type QuantityKind } from '@shared/measure/quantities';
import { guardedLimits, type BandPm, type DecisionRule, type Verdict } from '@shared/measure/spec';
import { firstNumberDecimals, isLengthQuantity, quantityFigureFor, readerUnitFor, type QuantityFigure } from '@shared/public/quantity-figures';
import { specLimitTexts, specLimitTextsIn, type SpecLimitsInUnit, type SpecLimitTexts } from '@shared/public/spec-limits';
import { isLengthUnit, maxExactDecimals, micrometresToPicometres, picometresPerUnit, type LengthUnit } from '@shared/measure/units';
import type { BandUm } from './band';

/** The coarse and the fine unit of each system: inches and thou, millimetres and micrometres. */
export const systemDisplayUnits: Readonly<Record<UnitSystem, { main: LengthUnit; fine: LengthUnit }>> = {
  imperial: { main: 'in', fine: 'thou' },
  metric: { main: 'mm', fine: 'um' },
};

/** Fewest places a figure is shown with when it carries no uncertainty to set them (a feeler blade, a limit). */
const minDecimals: Readonly<Record<LengthUnit, number>> = { in: 4, thou: 1, tenth: 0, mm: 3, um: 0 };

/** A value ± U in one unit, GUM 7.2.6: U to two significant digits, the value to the same place. */
export function valueWithU(valueUm: number, expandedUm: number, unit: LengthUnit): { value: string; uncertainty: string } {
  const pm = micrometresToPicometres(valueUm);
  if (expandedUm === 0) {
    const text = formatNumber(pm, unit, minDecimals[unit]);
    return { value: `${text} ${symbolFor(unit, text)}`, uncertainty: '0' };
  }
  return formatResult(pm, expandedUm, unit);
}

/** One figure in the reader's system, in its main unit and its fine one. */
export interface SystemFigure {
  /** "0.00470 in ± 0.00031 in". */
  main: string;
  /**
   * "4.70 thou ± 0.31 thou"; null for a figure of one main unit or more, which is written in the
   * main unit only (14.331 mm, never 14331 µm: `showsFineUnit`, shared/measure/format.ts).
   */
  fine: string | null;
  /** The value alone in the main unit, "0.00470 in". */
  value: string;
}

/**
 * `valueUm` ± `expandedUm` in `system` (the engine's µm, formatted by shared/measure/format). A
 * computed figure follows GUM 7.2.6 (U to two significant digits, the value to its place); a
 * reading given its `resolutionPm` is shown at its resolution instead, as format.ts sets out,
 * which keeps the precision of the figure typed when it is converted (NIST SP 811 B.7.2): a
 * 0.5642 in reading reads 14.331 mm. U is always in the unit of the value beside it.
 */
export function systemFigure(valueUm: number, expandedUm: number, system: UnitSystem, resolutionPm?: bigint | null): SystemFigure {
  const { main, fine } = systemDisplayUnits[system];
  const at = (unit: LengthUnit) =>
    resolutionPm
      ? { value: formatLength(micrometresToPicometres(valueUm), unit, resolutionPm), uncertainty: formatUncertainty(expandedUm, unit) }
      : valueWithU(valueUm, expandedUm, unit);
  const a = at(main);
  const b = showsFineUnit(micrometresToPicometres(valueUm), main) ? at(fine) : null;
  return {
    main: expandedUm === 0 ? a.value : `${a.value} ± ${a.uncertainty}`,
    fine: b === null ? null : expandedUm === 0 ? b.value : `${b.value} ± ${b.uncertainty}`,
    value: a.value,
  };
}

/** A limit written exactly, no trailing zeros: 76.2 µm → "0.003" in, "0.0762" mm. */
export function exactText(pm: bigint, unit: LengthUnit): string {
  const text = formatNumber(pm, unit, maxExactDecimals[unit]);
  return text.includes('.') ? text.replace(/0+$/, '').replace(/\.$/, '') : text;
}

/** Decimal places of `text`'s first number ("0.00470 in" → 5). */
export function decimalsOf(text: string): number {
  return /\d+(?:\.(\d+))?/.exec(text)?.[1]?.length ?? 0;
}

const pmOf = (um: number | null): bigint | undefined => (um === null ? undefined : micrometresToPicometres(um));

/** A band in µm as the engine's picometre band. */
export function bandPm(min: number | null, max: number | null): BandPm {
  const minPm = pmOf(min);
  const maxPm = pmOf(max);
  return { ...(minPm !== undefined && { minPm }), ...(maxPm !== undefined && { maxPm }) };
}

/**
 * A spec's band written in `writtenIn` (the clearance's unit), shown in `unit` at the places the
 * spec was written to, converted by NIST SP 811 B.7.2 (`limitDecimals`): 0.0015–0.0040 in reads
 * "0.038–0.102 mm", not 0.0381–0.1016 mm. "at least …", "at most …" for one-sided bands.
 */
export function bandText(band: BandUm, writtenIn: LengthUnit, unit: LengthUnit): string {
  return specLimitTexts(band, writtenIn, unit).band ?? 'no limits';
}

/** Places a spec's limits are shown with in `unit` (the band picture's scale, the before-and-after chart). */
export function bandDecimals(band: BandUm, writtenIn: LengthUnit, unit: LengthUnit): number {
  const limits = [band.minUm, band.maxUm, band.preferredMinUm, band.preferredMaxUm, band.rejectUm].filter((um): um is number => um !== null);
  return limitDecimals(limits.map(micrometresToPicometres), writtenIn, unit);
}

/** What the band picture needs, in the reader's main unit. */
export function pictureProps(input: {
  valueUm: number;
  expandedUm: number;
  coverageFactor: number;
  band: BandUm;
  /** The unit the spec was written in (the clearance's). */
  bandUnit: LengthUnit;
  verdict: Verdict;
  rule: DecisionRule;
  system: UnitSystem;
}) {
  const unit = systemDisplayUnits[input.system].main;
  const band = bandPm(input.band.minUm, input.band.maxUm);
  const hasPreferred = input.band.preferredMinUm !== null || input.band.preferredMaxUm !== null;
  const preferred = hasPreferred ? bandPm(input.band.preferredMinUm ?? input.band.minUm, input.band.preferredMaxUm ?? input.band.maxUm) : null;
  const rejectPm = pmOf(input.band.rejectUm) ?? null;
  const expandedPm = micrometresToPicometres(input.expandedUm);
  // The scale is labelled as the limits were written, with at most one place more for the value
  // (its U is in the words beside the picture): 0.0030, 0.0047, 0.0050 in. Converted to the other
  // system (NIST SP 811 B.7.2) the limits set the places alone: 0.076, 0.119, 0.127 mm.
  // Across systems the converted limits have no place to spare, so the scale keeps theirs.
  const valueDecimals = decimalsOf(valueWithU(input.valueUm, input.expandedUm, unit).value);
  const limitPlaces = bandDecimals(input.band, input.bandUnit, unit);
  const decimals = systemOf(input.bandUnit) === input.system ? Math.max(limitPlaces, Math.min(valueDecimals, limitPlaces + 1)) : limitPlaces;
  return {
    unit,
    decimals,
    valuePm: micrometresToPicometres(input.valueUm),
    expandedPm,
    coverageFactor: input.coverageFactor,
    band,
    preferred,
    rejectPm,
    limits: guardedLimits(band, expandedPm, input.rule),
    verdict: input.verdict,
    rule: input.rule,
  };
}

/**
 * The resolution a direct or repeated reading was taken at: from the engine's input when the
 * publication carries it, else one step of the last place typed. Null for a feeler bracket,
 * whose estimate is a midpoint and is shown by its uncertainty instead.
 */
export function readingResolutionPm(reading: {
  kind: 'direct' | 'bracket' | 'repeated';
  unit: AnyUnit;
  value: string | null;
  values: string[] | null;
  engine?: { kind: string; unit: string; resolution?: number | string } | undefined;
}): bigint | null {
  if (reading.kind === 'bracket' || !isLengthUnit(reading.unit)) return null;
  const engine = reading.engine;
  if (engine && engine.kind !== 'bracket' && engine.resolution !== undefined && engine.unit === reading.unit) {
    const text = String(engine.resolution);
    if (/^\d+(\.\d+)?$/.test(text)) return stepOf(text, reading.unit, true);
  }
  const typed = reading.kind === 'direct' ? reading.value : (reading.values?.[0] ?? null);
  return typed ? stepOf(typed, reading.unit, false) : null;
}

/** `text` itself as a length (`whole`), or one unit of its last decimal place. */
function stepOf(text: string, unit: LengthUnit, whole: boolean): bigint | null {
  const match = /^[−-]?(\d+)(?:\.(\d+))?$/.exec(text.trim());
  if (!match) return null;
  const decimals = match[2]?.length ?? 0;
  if (decimals > maxExactDecimals[unit]) return null;
  const scale = picometresPerUnit[unit] / 10n ** BigInt(decimals);
  const pm = whole ? BigInt(`${match[1]}${match[2] ?? ''}`) * scale : scale;
  return pm > 0n ? pm : null;
}

// ---------------------------------------------------------------------------------------------
// Every quantity. Lengths keep the µm path above (in and thou, mm and µm, the reader's system);
// any other quantity is shown from its figures in its own unit, converted to the reader's system
// (shared/public/quantity-figures.ts): 35 lbf·ft ± 1.2 lbf·ft reads 47 N·m ± 1.6 N·m in metric.

/** A published figure as a page shows it: a length by its µm figures, any other quantity in its unit. */
export type ShownFigure =
  | { quantity: 'length'; valueUm: number; expandedUm: number; resolutionPm?: bigint | null }
  | { quantity: Exclude<QuantityKind, 'length'>; figure: QuantityFigure };

/** What a published reading or result carries of its figures (older publications: lengths in µm only). */
interface PublishedFigures {
  quantity?: QuantityKind | undefined;
  unit: AnyUnit;
  valueUm: number | null;
  expandedUncertaintyUm: number | null;
  expandedUncertainty?: number | undefined;
  display: string;
}

function otherFigure(f: PublishedFigures, value: number | undefined): ShownFigure | null {
  if (!f.quantity || f.quantity === 'length') return null;
  return {
    quantity: f.quantity,
    figure: { unit: f.unit, value: value ?? 0, expandedUncertainty: f.expandedUncertainty ?? 0, decimals: firstNumberDecimals(f.display) },
  };
}

/** A published reading's figure: a length at its resolution, any other quantity at the places it was read to. */
export function readingShown(reading: PublishedFigures & Parameters<typeof readingResolutionPm>[0] & { estimate?: number | undefined }): ShownFigure {
  return (
    otherFigure(reading, reading.estimate) ?? {
      quantity: 'length',
      valueUm: reading.valueUm ?? 0,
      expandedUm: reading.expandedUncertaintyUm ?? 0,
      resolutionPm: readingResolutionPm(reading),
    }
  );
}

/** A published result's figure ("clearance" in the API). */
export function resultShown(result: PublishedFigures & { value?: number | undefined }): ShownFigure {
  return otherFigure(result, result.value) ?? { quantity: 'length', valueUm: result.valueUm ?? 0, expandedUm: result.expandedUncertaintyUm ?? 0 };
}

/** A figure in the reader's system: `systemFigure` for a length, its own unit or the system's usual one for any other. */
export function shownText(shown: ShownFigure, system: UnitSystem): SystemFigure {
  if (shown.quantity === 'length') return systemFigure(shown.valueUm, shown.expandedUm, system, shown.resolutionPm);
  const text = quantityFigureFor(shown.figure, system);
  return { main: text.main, fine: null, value: text.value };
}

/** Whether a figure carries an uncertainty to show. */
export function hasUncertainty(shown: ShownFigure): boolean {
  return shown.quantity === 'length' ? shown.expandedUm > 0 : shown.figure.expandedUncertainty > 0;
}

/** The unit a figure of another quantity is shown in for `system`. */
export function shownUnit(shown: Exclude<ShownFigure, { quantity: 'length' }>, system: UnitSystem): AnyUnit {
  return readerUnitFor(shown.figure.unit, system);
}

/** A value of `from` in `to` (a temperature takes the offset; set `difference` for U or a span). */
export function inUnit(value: number, from: AnyUnit, to: AnyUnit, difference = false): number {
  return from === to ? value : convertNumber(value, from, to, { difference });
}

/**
 * A spec's limits as words in the reader's system: a length's in its main unit (B.7.2 places),
 * any other quantity's from its limits in the result's unit. Null without limits.
 */
export function limitTextsFor(
  result: { quantity?: QuantityKind | undefined; unit: AnyUnit; band: BandUm | null; bandInUnit?: SpecLimitsInUnit | null | undefined },
  system: UnitSystem,
): SpecLimitTexts | null {
  if (isLengthQuantity(result.quantity) && isLengthUnit(result.unit)) {
    return result.band ? specLimitTexts(result.band, result.unit, systemDisplayUnits[system].main) : null;
  }
  return result.bandInUnit ? specLimitTextsIn(result.bandInUnit, result.unit, readerUnitFor(result.unit, system)) : null;
}

/** "N·m", "°", "" for a ratio: the symbol of a figure's unit, for scale captions. */
export function unitSymbolOf(unit: AnyUnit): string {
  return unitTable[unit].symbol;
}

/**
 * The band picture of a result of another quantity, in the reader's unit: the limits as the
 * engine judged them, the value, its coverage interval and the limits where the verdict changes
 * (the guarded rule moves them in by the interval's halves, ISO 14253-1; the simple rule not at all).
 */
export function quantityPictureProps(input: {
  unit: AnyUnit;
  value: number;
  interval: readonly [number, number];
  expandedUncertainty: number;
  coverageFactor: number;
  coverageProbability: number;
  band: SpecLimitsInUnit;
  verdict: Verdict;
  rule: DecisionRule;
  /** Places the value was shown with as judged. */
  decimals: number | null;
  system: UnitSystem;
}) {
  const to = readerUnitFor(input.unit, input.system);
  const at = (v: number | null) => (v === null ? undefined : inUnit(v, input.unit, to));
  const value = inUnit(input.value, input.unit, to);
  const low = inUnit(input.interval[0], input.unit, to);
  const high = inUnit(input.interval[1], input.unit, to);
  const min = at(input.band.min);
  const max = at(input.band.max);
  const below = input.rule === 'guarded' ? value - low : 0;
  const above = input.rule === 'guarded' ? high - value : 0;
  const asymmetric = Math.abs(value - low - (high - value)) > 1e-9 * Math.max(1, Math.abs(value), Math.abs(high - low));
  const shown = quantityFigureFor({ unit: input.unit, value: input.value, expandedUncertainty: input.expandedUncertainty, decimals: input.decimals }, input.system);
  const limitTexts = specLimitTextsIn(input.band, input.unit, to);
  // The scale keeps the limits' places, and at most one more for the value.
  const limitPlaces = Math.max(0, ...[limitTexts.band, limitTexts.preferred, limitTexts.reject].map((t) => (t ? (firstNumberDecimals(t) ?? 0) : 0)));
  const valuePlaces = firstNumberDecimals(shown.value) ?? limitPlaces;
  return {
    unit: to,
    decimals: Math.max(limitPlaces, Math.min(valuePlaces, limitPlaces + 1)),
    band: {
      ...(min !== undefined && { min }),
      ...(max !== undefined && { max }),
      ...(at(input.band.preferredMin) !== undefined && { preferredMin: at(input.band.preferredMin)! }),
      ...(at(input.band.preferredMax) !== undefined && { preferredMax: at(input.band.preferredMax)! }),
      ...(at(input.band.reject) !== undefined && { reject: at(input.band.reject)! }),
    },
    value,
    interval: [low, high] as const,
    asymmetric,
    coverageFactor: input.coverageFactor,
    coverageProbability: input.coverageProbability,
    limits: {
      ...(min !== undefined && { acceptMin: min + below, rejectBelow: min - above }),
      ...(max !== undefined && { acceptMax: max - above, rejectAbove: max + below }),
    },
    verdict: input.verdict,
    rule: input.rule,
  };
}
