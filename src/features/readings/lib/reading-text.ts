import { formatUncertainty } from '@shared/measure/format';
import { formatUncertaintyIn, withUnit as figureWithUnit } from '@shared/measure/format-quantity';
import { convertNumber, factorNumber, quantityKinds, quantityOf, type AnyUnit } from '@shared/measure/quantities';
import { typedUnitOfFigure } from '@shared/measure/quantity-text';
import { isLengthUnit, unitSymbols } from '@shared/measure/units';
import type { Reading, ReadingKind } from '@shared/readings/reading.schema';

/** Our words for the kinds of reading. */
export const readingKindWords: Record<ReadingKind, string> = {
  direct: 'direct',
  bracket: 'feeler bracket',
  repeated: 'repeated',
};

/**
 * A number with a reading's unit after it: lengths as they have always read ("0.5642 in",
 * "2 tenths"), other quantities with the spacing SI asks for ("64.2 cc", "108°", "35 lbf·ft").
 */
export function withReadingUnit(text: string, unit: AnyUnit): string {
  return isLengthUnit(unit) ? `${text} ${unitSymbols[unit]}` : figureWithUnit(text, unit);
}

/** A text as typed, with the reading's unit after it when none was typed (so "0.5642" reads "0.5642 in", "64.2" reads "64.2 cc"). */
function withUnit(text: string, reading: Pick<Reading, 'unit'>): string {
  return typedUnitOfFigure(text) !== null ? text : withReadingUnit(text, reading.unit);
}

function enteredText(reading: Reading, field: string, stored: string | null): string {
  const value = reading.entered[field];
  return withUnit(typeof value === 'string' ? value : (stored ?? ''), reading);
}

/** The figures as they were typed: "0.5642 in", "0.003 in enters · 0.004 in does not", "0.5642 in, 0.5643 in", "35 lb-ft". */
export function enteredFigures(reading: Reading): string {
  if (reading.kind === 'direct') return enteredText(reading, 'value', reading.value);
  if (reading.kind === 'bracket') {
    return `${enteredText(reading, 'passes', reading.passes)} enters · ${enteredText(reading, 'stops', reading.stops)} does not`;
  }
  const typed = reading.entered.values;
  const list = Array.isArray(typed) ? typed : (reading.values ?? []);
  return list.map((v) => withUnit(v, reading)).join(', ');
}

/**
 * The reading's standard uncertainty with its unit: a length from its µm figure as it always
 * was ("0.000029 in"), any other quantity from `result.standardUncertainty` in the reading's
 * unit ("0.29 lbf·ft", "0.12 cc").
 */
export function uncertaintyText(reading: Pick<Reading, 'unit' | 'result'>): string {
  const { result, unit } = reading;
  if (isLengthUnit(unit) && result.standardUncertaintyUm !== null) return formatUncertainty(result.standardUncertaintyUm, unit);
  return formatUncertaintyIn(result.standardUncertainty ?? 0, unit);
}

/** The engine's estimate with its standard uncertainty: "0.5642 in ± 0.000029 in", "64.2 cc ± 0.12 cc". */
export function estimateText(reading: Pick<Reading, 'unit' | 'result'>): string {
  return `${reading.result.display} ± ${uncertaintyText(reading)}`;
}

/**
 * What the readings table sorts estimates by: one quantity after another (lengths first), and
 * within a quantity by size whatever unit each was read in (µm for lengths as before, the
 * quantity's base unit for the rest, temperatures in °C).
 */
export function estimateSortKey(reading: Pick<Reading, 'unit' | 'result'>): [number, number] {
  const quantity = quantityOf(reading.unit);
  const rank = quantityKinds.indexOf(quantity);
  if (quantity === 'length' && reading.result.valueUm !== null) return [rank, reading.result.valueUm];
  const value = reading.result.value ?? Number.NaN;
  if (quantity === 'temperature') return [rank, Number.isFinite(value) ? convertNumber(value, reading.unit, 'degC') : value];
  return [rank, value * factorNumber(reading.unit)];
}

/** Values typed into one box, separated by semicolons, new lines or a comma and a space. */
export function splitValues(text: string): string[] {
  return text
    .split(/\s*[;\n]\s*|,\s+/)
    .map((v) => v.trim())
    .filter(Boolean);
}
