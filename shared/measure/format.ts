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
import { divideRounded } from './decimal';
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
