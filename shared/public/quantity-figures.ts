/**
 * Published figures of quantities other than a length, for readers: the value and U in the
 * figure's own unit, or converted to the reader's system (lbf·ft → N·m, psi → kPa, cc stays cc).
 * Lengths keep their own path (µm-based, shared/measure/format.ts and the public figures code);
 * this is the simple path every other quantity takes. No zod here: the story page is a reader's
 * first load.
 */
import type { UnitSystem } from '../measure/format';
import { convertedDecimalsIn, formatCoverageFactor, formatUncertaintyIn, formatValue, uncertaintyDecimals } from '../measure/format-quantity';
import { convertNumber, defaultUnitFor, quantityOf, unitTable, type AnyUnit, type QuantityKind } from '../measure/quantities';

/** A figure of any quantity in its own unit: the value, U and the places its value was shown to. */
export interface QuantityFigure {
  unit: AnyUnit;
  value: number;
  /** U; 0 when the figure carries none (a limit). */
  expandedUncertainty: number;
  /** Places the value was shown with as judged (its resolution, or U's place); U's place when null. */
  decimals: number | null;
}

/** True when a published figure is a length (older publications carry no quantity: they are all lengths). */
export function isLengthQuantity(quantity: QuantityKind | undefined | null): boolean {
  return quantity === undefined || quantity === null || quantity === 'length';
}

/**
 * The unit a reader of `system` sees a figure of `unit` in: its own when it belongs to that
 * system or to both (°, s, a ratio) or when the system's usual unit is not of that system either
 * (volumes are cc'd in both: cc stays cc, ml stays ml), else the system's usual unit of its
 * quantity (`defaultUnitFor`): lbf·ft → N·m, psi → kPa, °F → °C, in³ → cc.
 */
export function readerUnitFor(unit: AnyUnit, system: UnitSystem): AnyUnit {
  const own = unitTable[unit].system;
  if (own === system || own === 'any') return unit;
  const usual = defaultUnitFor(quantityOf(unit), system);
  return unitTable[usual].system === system ? usual : unit;
}

/** Decimal places of the first number written in `text` ("35 lbf·ft ± 1.2 lbf·ft" → 0, "10.19 ± 0.11" → 2); null without one. */
export function firstNumberDecimals(text: string): number | null {
  const m = /\d+(?:\.(\d+))?/.exec(text);
  return m ? (m[1]?.length ?? 0) : null;
}

/** The shortest decimal text of a double as people write it (9.5, not 9.500000000000002), no exponent. */
export function shortDecimalText(value: number): string {
  const rounded = Number(value.toPrecision(12));
  const text = String(rounded);
  if (!/e/i.test(text)) return text;
  // Very small or large: fixed notation at up to 12 places, trailing zeros dropped.
  const fixed = rounded.toFixed(12);
  return fixed.includes('.') ? fixed.replace(/0+$/, '').replace(/\.$/, '') : fixed;
}

/** Decimal places of a double's shortest decimal text (9.5 → 1, 10 → 0). */
export function decimalsOfNumber(value: number): number {
  return /\.(\d+)$/.exec(shortDecimalText(value))?.[1]?.length ?? 0;
}

/** What a figure reads in one unit: "47 N·m", "1.6 N·m" and the two together. */
export interface QuantityFigureText {
  unit: AnyUnit;
  /** The value with its symbol: "47 N·m", "10.19". */
  value: string;
  /** U with its symbol, or null when the figure has none. */
  uncertainty: string | null;
  /** "47 N·m ± 1.6 N·m", or the value alone. */
  main: string;
}

/**
 * The figure in `to` (its own unit when absent): U to two significant digits (GUM 7.2.6); the
 * value at the places it was shown with, converted by NIST SP 811 B.7.2 so it keeps its
 * precision (35 lbf·ft → 47 N·m, not 47.45 N·m), else at U's place. A temperature's value takes
 * the scale's offset, its U does not (a difference).
 */
export function quantityFigureIn(figure: QuantityFigure, to: AnyUnit = figure.unit): QuantityFigureText {
  const from = figure.unit;
  const value = from === to ? figure.value : convertNumber(figure.value, from, to);
  const expanded = from === to ? figure.expandedUncertainty : convertNumber(figure.expandedUncertainty, from, to, { difference: true });
  const places =
    figure.decimals === null ? (expanded > 0 ? uncertaintyDecimals(expanded) : decimalsOfNumber(value)) : convertedDecimalsIn(figure.decimals, from, to);
  const valueText = formatValue(value, to, places);
  const uncertainty = expanded > 0 ? formatUncertaintyIn(expanded, to) : null;
  return { unit: to, value: valueText, uncertainty, main: uncertainty ? `${valueText} ± ${uncertainty}` : valueText };
}

/** The figure as a reader of `system` sees it (`readerUnitFor`). */
export function quantityFigureFor(figure: QuantityFigure, system: UnitSystem): QuantityFigureText {
  return quantityFigureIn(figure, readerUnitFor(figure.unit, system));
}

/**
 * The figure in the reader's system with its k, "47 N·m ± 1.6 N·m (k = 2)", or null when the
 * reader's system shows it in its own unit already (the server's `converted`).
 */
export function convertedQuantityDisplay(figure: QuantityFigure, coverageFactor: number, system: UnitSystem | null): string | null {
  if (!system) return null;
  const to = readerUnitFor(figure.unit, system);
  if (to === figure.unit) return null;
  const shown = quantityFigureIn(figure, to);
  return shown.uncertainty ? `${shown.main} (k = ${formatCoverageFactor(coverageFactor)})` : shown.main;
}
