/**
 * Display of lengths in the reader's chosen system.
 *
 * The rule for a reading: show it with the display step set to the largest power of ten of the
 * display unit that is not coarser than the reading's resolution. So the instrument's resolution
 * is never lost, and no digit is shown more than one place finer than it.
 *   0.0001 in resolution → in: 4 places (0.5642 in); mm: 0.00254 mm → 3 places (14.331 mm);
 *   µm: 2.54 µm → 0 places (14331 µm); thou: 0.1 thou → 1 place (564.2 thou).
 *   0.01 mm resolution → in: 0.000394 in → 4 places; thou: 0.394 → 1 place; mm: 2 places.
 * For a computed result with an uncertainty, GUM 7.2.6 governs instead: the standard uncertainty
 * is given to two significant digits and the value to the same decimal place.
 */
import { divideRounded, parseDecimalText } from './decimal';
import { picometresPerUnit, type LengthUnit, micrometresToUnitNumber, unitSymbols } from './units';

/** The two systems a reader can choose. */
export const unitSystems = ['imperial', 'metric'] as const;

/** A reader's measuring system. */
export type UnitSystem = (typeof unitSystems)[number];

/** The units offered in each system, in the order a picker shows them. */
export const systemUnits: Readonly<Record<UnitSystem, readonly LengthUnit[]>> = {
  imperial: ['in', 'thou', 'tenth'],
  metric: ['mm', 'um'],
};

/** The unit a system shows lengths in unless the reader picks another. */
export function defaultUnitFor(system: UnitSystem): LengthUnit {
  return system === 'imperial' ? 'in' : 'mm';
}

/** The system a unit belongs to. */
export function systemOf(unit: LengthUnit): UnitSystem {
  return unit === 'mm' || unit === 'um' ? 'metric' : 'imperial';
}

/** Most decimal places ever shown: enough for 1 pm in inches (11 places). */
const MAX_DISPLAY_DECIMALS = 12;

/**
 * Decimal places for a value of resolution `resolutionPm` shown in `unit`: the smallest d ≥ 0 with
 * 10^−d unit ≤ resolution (exact bigint comparison, no logarithms).
 */
export function displayDecimals(resolutionPm: bigint, unit: LengthUnit): number {
  const perUnit = picometresPerUnit[unit];
  const resolution = resolutionPm < 0n ? -resolutionPm : resolutionPm;
  if (resolution === 0n) return MAX_DISPLAY_DECIMALS;
  for (let d = 0; d < MAX_DISPLAY_DECIMALS; d += 1) {
    if (perUnit <= resolution * 10n ** BigInt(d)) return d;
  }
  return MAX_DISPLAY_DECIMALS;
}

/** The number part of a length in `unit`, rounded half away from zero to `decimals` places (exact). */
export function formatNumber(pm: bigint, unit: LengthUnit, decimals: number): string {
  const places = Math.max(0, Math.min(MAX_DISPLAY_DECIMALS, Math.trunc(decimals)));
  const scaled = divideRounded(pm * 10n ** BigInt(places), picometresPerUnit[unit], 'half-away-from-zero');
  const negative = scaled < 0n;
  const digits = (negative ? -scaled : scaled).toString().padStart(places + 1, '0');
  const cut = digits.length - places;
  const body = places === 0 ? digits : `${digits.slice(0, cut)}.${digits.slice(cut)}`;
  return `${negative ? '−' : ''}${body}`;
}

/** Unit symbol to print after `numberText`: "tenth" for exactly one, "tenths" otherwise. */
export function symbolFor(unit: LengthUnit, numberText: string): string {
  if (unit === 'tenth' && /^[−-]?1(\.0*)?$/.test(numberText)) return 'tenth';
  return unitSymbols[unit];
}

/** A reading for display: "0.5642 in", "14.331 mm", shown at its resolution (rule above). */
export function formatLength(pm: bigint, unit: LengthUnit, resolutionPm: bigint): string {
  const text = formatNumber(pm, unit, displayDecimals(resolutionPm, unit));
  return `${text} ${symbolFor(unit, text)}`;
}

/** Decimal places that put a positive number at two significant digits (GUM 7.2.6). */
export function twoSignificantDecimals(value: number): number {
  if (!Number.isFinite(value) || value <= 0) return 0;
  return Math.max(0, 1 - Math.floor(Math.log10(value)));
}

/**
 * An uncertainty (given in µm) in `unit` to two significant digits, e.g. "0.00029 in", "0.73 µm".
 * Zero prints as "0".
 */
export function formatUncertainty(um: number, unit: LengthUnit): string {
  const inUnit = Math.abs(micrometresToUnitNumber(um, unit));
  const decimals = Math.min(MAX_DISPLAY_DECIMALS + 3, twoSignificantDecimals(inUnit));
  const text = inUnit === 0 ? '0' : inUnit.toFixed(decimals);
  return `${text} ${symbolFor(unit, text)}`;
}

/**
 * A result with its uncertainty, per GUM 7.2.6: "0.00350 in ± 0.00058 in (k = 2)" style pieces.
 * Returns the value text at the uncertainty's decimal place, never coarser than `minDecimals`.
 */
export function formatResult(pm: bigint, uncertaintyUm: number, unit: LengthUnit, minDecimals = 0): { value: string; uncertainty: string } {
  const inUnit = Math.abs(micrometresToUnitNumber(uncertaintyUm, unit));
  const decimals = Math.max(minDecimals, Math.min(MAX_DISPLAY_DECIMALS, twoSignificantDecimals(inUnit)));
  const value = formatNumber(pm, unit, decimals);
  return { value: `${value} ${symbolFor(unit, value)}`, uncertainty: formatUncertainty(uncertaintyUm, unit) };
}

/*
 * Converting a written figure to another unit.
 *
 * The rule (NIST SP 811 (2008) B.7.2, "Rounding converted numerical values of quantities"; the
 * factor 1 in = 25.4 mm exactly is B.8's 2.54 E−02 m): a converted number keeps the precision of
 * the original, no more and no less. A figure written to d places of `from` stands for anything
 * within half a step 10^−d of that unit; the converted figure is rounded to the largest power-of-ten
 * step of `to` that is not coarser than that step, so its rounding error is never larger than the
 * original's and less than ten times smaller. It is `displayDecimals` applied to the step of the
 * figure's last place (what a reading's resolution is to its display):
 *   0.0001 in = 0.00254 mm → steps of 0.001 mm: 0.5642 in → 14.331 mm, 0.0015 in → 0.038 mm,
 *   0.0040 in → 0.102 mm (0.0381 and 0.1016 would claim a tenth of a micrometre nobody measured);
 *   0.01 mm = 0.000394 in → steps of 0.0001 in: 25.40 mm → 1.0000 in;
 *   SP 811's own example: 36 ft → 10.9728 m → 11.0 m (a step of 1 ft = 0.3048 m → 0.1 m).
 * Within one system the factors are powers of ten and the conversion is exact: 0.0015 in → 1.5 thou.
 */

/** The step of a figure's last place, `decimals` places of `unit`, in picometres (at least 1). */
export function lastPlaceStepPm(decimals: number, unit: LengthUnit): bigint {
  const places = Math.max(0, Math.min(MAX_DISPLAY_DECIMALS, Math.trunc(decimals)));
  const step = divideRounded(picometresPerUnit[unit], 10n ** BigInt(places), 'half-even');
  return step > 0n ? step : 1n;
}

/**
 * Decimal places in `to` for a figure written to `fromDecimals` places in `from`, by the rule
 * above (NIST SP 811 B.7.2). The same unit keeps its places.
 */
export function convertedDecimals(fromDecimals: number, from: LengthUnit, to: LengthUnit): number {
  if (from === to) return Math.max(0, Math.min(MAX_DISPLAY_DECIMALS, Math.trunc(fromDecimals)));
  return displayDecimals(lastPlaceStepPm(fromDecimals, from), to);
}

/** A length written to `fromDecimals` places in `from`, shown in `to` at the places it supports: "14.331 mm". */
export function formatConvertedLength(pm: bigint, from: LengthUnit, fromDecimals: number, to: LengthUnit): string {
  const text = formatNumber(pm, to, convertedDecimals(fromDecimals, from, to));
  return `${text} ${symbolFor(to, text)}`;
}

/** Decimal places of the first number in `text` ("0.0040 in" → 4, "−3.5 thou" → 1, "12 mm" → 0). */
export function decimalPlacesOf(text: string): number {
  return /\d+(?:\.(\d+))?/.exec(text)?.[1]?.length ?? 0;
}

/**
 * A figure as written ("3.5 thou", "0.5642 in": its number and the unit it was written in) shown in
 * `to` at the places it supports, so a reading typed in thou reads like its neighbours in a table
 * of inches: "3.5 thou" → "0.0035 in". Null when the text holds no number.
 */
export function convertWrittenLength(text: string, from: LengthUnit, to: LengthUnit): string | null {
  const match = /[−-]?\d+(?:\.\d+)?/.exec(text);
  if (!match) return null;
  const decimal = parseDecimalText(match[0].replace('−', '-'));
  if (!decimal) return null;
  // Exact in picometres for every place a unit holds exactly; finer text is rounded to the picometre.
  const pm = divideRounded(decimal.coefficient * picometresPerUnit[from], 10n ** BigInt(decimal.scale), 'half-even');
  return formatConvertedLength(pm, from, decimal.scale, to);
}

/**
 * Fewest places a converted limit is shown with, across systems: 0.001 mm and 0.0001 in, the grain
 * workshop clearances are written to. A limit is exact as written (it is not a rounded
 * measurement), so it is not shown coarser than the figures judged against it. Common practice (no
 * published source).
 */
export const CONVERTED_LIMIT_MIN_DECIMALS: Readonly<Record<LengthUnit, number>> = { in: 4, thou: 1, tenth: 0, mm: 3, um: 0 };

/** Fewest places that write `pm` exactly in `unit` (at most the unit's exact places). */
export function exactPlaces(pm: bigint, unit: LengthUnit): number {
  const per = picometresPerUnit[unit];
  for (let d = 0; d < MAX_DISPLAY_DECIMALS; d += 1) if ((pm * 10n ** BigInt(d)) % per === 0n) return d;
  return MAX_DISPLAY_DECIMALS;
}

/**
 * Places for a spec's limits shown in `shownIn` when they were written in `writtenIn`: the places
 * the spec was written to (the finest of its limits, so 0.0015 and 0.004 read 0.0015 and 0.0040),
 * converted by NIST SP 811 B.7.2, never below `CONVERTED_LIMIT_MIN_DECIMALS` across systems.
 */
export function limitDecimals(limitsPm: readonly bigint[], writtenIn: LengthUnit, shownIn: LengthUnit): number {
  const written = Math.max(0, ...limitsPm.map((pm) => exactPlaces(pm, writtenIn)));
  const converted = convertedDecimals(written, writtenIn, shownIn);
  if (systemOf(writtenIn) === systemOf(shownIn)) return converted;
  return Math.max(converted, CONVERTED_LIMIT_MIN_DECIMALS[shownIn]);
}

/** One limit at `decimals` places, with its symbol: "0.102 mm". */
export function formatLimit(pm: bigint, unit: LengthUnit, decimals: number): string {
  const text = formatNumber(pm, unit, decimals);
  return `${text} ${symbolFor(unit, text)}`;
}

/** A span of limits at `decimals` places: "0.038–0.102 mm", "at least 0.038 mm", "at most 5.0 thou". */
export function formatLimitSpan(minPm: bigint | null, maxPm: bigint | null, unit: LengthUnit, decimals: number): string {
  const number = (pm: bigint) => formatNumber(pm, unit, decimals);
  const symbol = (text: string) => symbolFor(unit, text);
  if (minPm !== null && maxPm !== null) {
    const hi = number(maxPm);
    return `${number(minPm)}–${hi} ${symbol(hi)}`;
  }
  if (minPm !== null) {
    const lo = number(minPm);
    return `at least ${lo} ${symbol(lo)}`;
  }
  if (maxPm !== null) {
    const hi = number(maxPm);
    return `at most ${hi} ${symbol(hi)}`;
  }
  return 'no limits';
}

/**
 * A figure's companion in the fine unit of its system (thou beside inches, µm beside millimetres)
 * is shown only below one main unit: a clearance of 0.119 mm also reads 119 µm, but a size is
 * written as a metric machinist writes it, 14.331 mm, never 14331 µm. Its uncertainty is always in
 * the unit of the value it qualifies ("14.331 mm ± 0.0015 mm", "119.4 µm ± 2.1 µm"), as GUM 7.2.4
 * writes a value and its U in one unit. The threshold is common practice (no published source).
 */
export function showsFineUnit(pm: bigint, mainUnit: LengthUnit): boolean {
  return (pm < 0n ? -pm : pm) < picometresPerUnit[mainUnit];
}
