/**
 * Display of any quantity: a value at the decimal place its resolution or its uncertainty
 * earns, an uncertainty to two significant digits (GUM 7.2.6), a unit symbol after it.
 */
import { parseDecimalText } from './decimal';
import { Fraction, fractionOfDecimal, fractionToFixed } from './exact';
import { convertExact, unitTable, type AnyUnit } from './quantities';

/** The symbol shown after a number: "tenth" for exactly one tenth, "tenths" otherwise; nothing for a ratio. */
export function symbolOf(unit: AnyUnit, numberText: string): string {
  if (unit === 'tenth' && /^[−-]?1(\.0*)?$/.test(numberText)) return 'tenth';
  return unitTable[unit].symbol;
}

/** "0.5642 in", "20 °C", "9.6" (a ratio): the number and its symbol, with the spacing SI asks for (none before °). */
export function withUnit(numberText: string, unit: AnyUnit): string {
  const symbol = symbolOf(unit, numberText);
  if (symbol === '') return numberText;
  if (symbol === '°') return `${numberText}°`;
  return `${numberText} ${symbol}`;
}

/** Decimal places for a step: the smallest d ≥ 0 with 10^−d ≤ step (exact), at most 12. */
export function decimalsForStep(step: Fraction): number {
  const s = step.abs();
  if (s.n === 0n) return 12;
  for (let d = 0; d < 12; d += 1) {
    if (new Fraction(1n, 10n ** BigInt(d)).lte(s)) return d;
  }
  return 12;
}

/** Decimal places that put a positive number at two significant digits (GUM 7.2.6). */
export function twoSignificant(value: number): number {
  if (!Number.isFinite(value) || value <= 0) return 0;
  return Math.max(0, 1 - Math.floor(Math.log10(value)));
}

/** A value (exact or double) in `unit` at `decimals` places, with its symbol. */
export function formatValue(value: Fraction | number, unit: AnyUnit, decimals: number): string {
  const text =
    typeof value === 'number'
      ? value.toFixed(Math.max(0, Math.min(20, decimals))).replace(/^-/, '−').replace(/^−(0\.?0*)$/, '$1')
      : fractionToFixed(value, decimals);
  return withUnit(text, unit);
}

/** An uncertainty in `unit` to two significant digits: "0.00029 in", "0.73 µm", "0.12 cc". */
export function formatUncertaintyIn(u: number, unit: AnyUnit): string {
  const magnitude = Math.abs(u);
  if (magnitude === 0) return withUnit('0', unit);
  const decimals = Math.min(15, twoSignificant(magnitude));
  return withUnit(magnitude.toFixed(decimals), unit);
}

/** Decimal places of an uncertainty at two significant digits, for rounding a value to it (GUM 7.2.6). */
export function uncertaintyDecimals(u: number): number {
  return Math.min(15, twoSignificant(Math.abs(u)));
}

/** A plain number for the working: up to `significant` digits, no trailing zeros. */
export function plainNumber(value: number, significant = 6): string {
  if (!Number.isFinite(value)) return String(value);
  return String(Number(value.toPrecision(significant))).replace('-', '−');
}

/** A coverage factor for the working and labels: "2" when whole, else two decimals ("1.90"). */
export function formatCoverageFactor(k: number): string {
  return Math.abs(k - Math.round(k)) < 1e-9 ? String(Math.round(k)) : k.toFixed(2);
}

/**
 * Decimal places in `to` for a figure written to `fromDecimals` places in `from` (any quantity):
 * the step of its last place converted exactly, then the largest power of ten not coarser than
 * it, so the converted figure keeps the original's precision (NIST SP 811 (2008) B.7.2; exact
 * factors from B.8, e.g. 1 in = 25.4 mm). A difference has no offset, so °F → °C steps by 5/9.
 * The same unit keeps its places. Lengths stored in picometres use `convertedDecimals` in
 * format.ts, the same rule in integers.
 */
export function convertedDecimalsIn(fromDecimals: number, from: AnyUnit, to: AnyUnit): number {
  const places = Math.max(0, Math.min(12, Math.trunc(fromDecimals)));
  if (from === to) return places;
  const step = new Fraction(1n, 10n ** BigInt(places)).mul(unitTable[from].factor).div(unitTable[to].factor);
  return decimalsForStep(step);
}

/**
 * A figure written as `text` (plain decimal, its trailing zeros count) in `from`, converted to
 * `to` at the places it supports: ("0.5642", in → mm) → "14.331 mm"; ("68", °F → °C) → "20 °C".
 * Null when `text` is not a plain decimal.
 */
export function formatConvertedFigure(text: string, from: AnyUnit, to: AnyUnit): string | null {
  const decimal = parseDecimalText(text.trim().replace('−', '-'));
  if (!decimal) return null;
  const value = convertExact(fractionOfDecimal(decimal), from, to);
  return formatValue(value, to, convertedDecimalsIn(decimal.scale, from, to));
}
