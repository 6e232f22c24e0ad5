/**
 * Reading any figure the way people type it: lengths as `parse.ts` reads them ("0.5642 in",
 * "3.5 thou"), and the other quantities a builder records: "64.2 cc", "4.1 cu in", "108°",
 * "35 lb-ft", "47 N·m", "45 psi", "3.1 bar", "92 °C", "12.5 s", "512 g", "10.2:1". The number is
 * kept as typed, so "64.20" keeps the resolution its last zero implies.
 */
import { parseDecimalText, type ExactDecimal } from './decimal';
import { Fraction, fractionOfDecimal, fractionToExactText } from './exact';
import { lookupUnit as lookupLengthUnit, parseLength } from './parse';
import { allUnits, convertExact, quantityOf, unitTable, unitsOf, type AnyUnit, type QuantityKind } from './quantities';
import { isLengthUnit } from './units';

/** A figure as entered: its text, its unit, its exact value. */
export interface EnteredFigure {
  /** The number exactly as typed, normalised only for sign and a leading point ("64.20", ".5" → "0.5"). */
  readonly text: string;
  readonly unit: AnyUnit;
  readonly decimal: ExactDecimal;
  /** The exact value in `unit`. */
  readonly value: Fraction;
}

/** The figure, or a message that says what was expected. */
export type ParseFigureResult = { ok: true; figure: EnteredFigure } | { ok: false; message: string };

/** Spellings of the units other than lengths, lower-case, inner spaces collapsed. */
export const otherUnitAliases: Readonly<Record<Exclude<AnyUnit, 'in' | 'thou' | 'tenth' | 'mm' | 'um'>, readonly string[]>> = {
  cc: ['cc', 'ccs', 'cm3', 'cm³', 'cubic centimetre', 'cubic centimetres', 'cubic centimeter', 'cubic centimeters'],
  ml: ['ml', 'millilitre', 'millilitres', 'milliliter', 'milliliters'],
  cu_in: ['cu in', 'cu_in', 'cu. in.', 'cu.in.', 'in3', 'in³', 'ci', 'cid', 'cubic inch', 'cubic inches'],
  deg: ['°', 'deg', 'degs', 'degree', 'degrees'],
  N_m: ['n·m', 'n.m', 'n m', 'nm', 'n-m', 'n_m', 'newton metre', 'newton metres', 'newton meter', 'newton meters'],
  lbf_ft: ['lbf·ft', 'lbf ft', 'lbf-ft', 'lbf_ft', 'lb-ft', 'lb ft', 'lb·ft', 'lbs-ft', 'ft-lb', 'ft-lbs', 'ft·lb', 'ft lb', 'ft lbs', 'ft·lbf', 'foot-pound', 'foot-pounds', 'pound-feet', 'pound-foot'],
  lbf_in: ['lbf·in', 'lbf in', 'lbf-in', 'lbf_in', 'lb-in', 'lb in', 'lb·in', 'in-lb', 'in-lbs', 'in·lb', 'in lb', 'in lbs', 'inch-pound', 'inch-pounds', 'pound-inches'],
  psi: ['psi', 'lbf/in²', 'lbf/in2', 'lb/in²', 'lb/in2'],
  bar: ['bar'],
  kPa: ['kpa', 'kilopascal', 'kilopascals'],
  degC: ['°c', 'degc', 'deg c', '° c', 'celsius', 'degrees c', 'degrees celsius'],
  degF: ['°f', 'degf', 'deg f', '° f', 'fahrenheit', 'degrees f', 'degrees fahrenheit'],
  s: ['s', 'sec', 'secs', 'second', 'seconds'],
  g: ['g', 'gram', 'grams'],
  '1': [':1', 'to 1', ': 1'],
};

const otherAliasToUnit = new Map<string, AnyUnit>(
  (Object.entries(otherUnitAliases) as [AnyUnit, readonly string[]][]).flatMap(([unit, aliases]) => aliases.map((a) => [a, unit] as const)),
);

/** Looks up any unit spelling (case-insensitive, inner spaces collapsed); undefined when unknown. */
export function lookupAnyUnit(text: string): AnyUnit | undefined {
  const key = text.trim().toLowerCase().replace(/\s+/g, ' ');
  return lookupLengthUnit(key) ?? otherAliasToUnit.get(key) ?? (allUnits as readonly string[]).find((u) => u.toLowerCase() === key) as AnyUnit | undefined;
}

/** "64.2 cc", "35 lbf·ft": examples of typing a figure of `quantity`. */
export const figureExamples: Readonly<Record<QuantityKind, string>> = {
  length: '0.5642 in, 3.5 thou or 14.33 mm',
  volume: '64.2 cc, 64.2 ml or 3.92 cu in',
  angle: '108° or 108 deg',
  torque: '35 lb-ft, 420 lb-in or 47 N·m',
  pressure: '45 psi, 3.1 bar or 310 kPa',
  temperature: '92 °C or 198 °F',
  time: '12.5 s',
  mass: '512 g',
  ratio: '10.2 or 10.2:1',
};

/** Largest magnitude accepted for a figure that is not a length. */
const MAX_OTHER = new Fraction(1_000_000_000);
/** Most decimal places accepted for a figure that is not a length. */
export const MAX_OTHER_DECIMALS = 12;
const MAX_INPUT = 64;
const NUMBER_THEN_REST = /^([+-]?(?:\d+(?:\.\d*)?|\.\d+))(.*)$/;

function unitList(quantity: QuantityKind | undefined): string {
  return quantity ? figureExamples[quantity] : 'a number and its unit, e.g. 0.5642 in, 64.2 cc, 35 lb-ft or 45 psi';
}

/**
 * Parses a typed figure of any quantity. `defaultUnit` is used when the text has no unit;
 * `quantity`, when given, refuses a unit of another quantity by name. Lengths go through
 * `parseLength`, so they are held as exactly and refused in the same words as before.
 */
export function parseFigureText(input: string, options: { defaultUnit?: AnyUnit; quantity?: QuantityKind } = {}): ParseFigureResult {
  const quantity = options.quantity ?? (options.defaultUnit ? quantityOf(options.defaultUnit) : undefined);
  const text = input.trim().replace(/^[−–]/, '-').replace(/\s+/g, ' ');
  const expected = `Enter ${quantity ? `a number and its unit, e.g. ${unitList(quantity)}` : unitList(undefined)}.`;
  if (text.length === 0) return { ok: false, message: expected };
  if (text.length > MAX_INPUT) return { ok: false, message: `That is too long for a figure. ${expected}` };
  const match = NUMBER_THEN_REST.exec(text);
  if (!match) return { ok: false, message: `"${text}" does not start with a number. ${expected}` };
  const numberText = match[1] ?? '';
  const rest = (match[2] ?? '').trim();
  if (/^,\d/.test(match[2] ?? '')) return { ok: false, message: 'Use a decimal point, not a comma (64.2 cc, not 64,2 cc).' };

  let unit: AnyUnit | undefined;
  if (rest.length === 0) unit = options.defaultUnit;
  else unit = lookupAnyUnit(rest);
  if (rest.length > 0 && unit === undefined) {
    // A length's own refusals (fractions, 1e-4) read better than "not a unit".
    if (quantity === 'length' || quantity === undefined) {
      const asLength = parseLength(text);
      if (!asLength.ok && quantity === 'length') return asLength;
    }
    return { ok: false, message: `"${rest}" is not a unit Benchproof reads here. ${expected}` };
  }
  if (unit === undefined) return { ok: false, message: `Add a unit after the number: ${unitList(quantity)}.` };
  if (quantity && quantityOf(unit) !== quantity) {
    const symbols = unitsOf(quantity).map((u) => unitTable[u].symbol || 'no unit').join(', ');
    return { ok: false, message: `${unitTable[unit].name} is not a ${quantity === 'ratio' ? 'ratio' : quantity}: enter it in ${symbols}.` };
  }

  if (isLengthUnit(unit)) {
    const parsed = parseLength(rest.length ? text : `${numberText} ${unit}`, { defaultUnit: unit });
    if (!parsed.ok) return parsed;
    return { ok: true, figure: { text: parsed.length.text, unit: parsed.length.unit, decimal: parsed.length.decimal, value: fractionOfDecimal(parsed.length.decimal) } };
  }
  const decimal = parseDecimalText(numberText);
  if (!decimal) return { ok: false, message: expected };
  if (decimal.scale > MAX_OTHER_DECIMALS) return { ok: false, message: `Too many decimal places: at most ${MAX_OTHER_DECIMALS}.` };
  const value = fractionOfDecimal(decimal);
  if (value.abs().gt(MAX_OTHER)) return { ok: false, message: 'That number is too large.' };
  const normalised = numberText.replace(/^\+/, '').replace(/^(-?)\./, (_, sign: string) => `${sign}0.`).replace(/\.$/, '');
  return { ok: true, figure: { text: normalised, unit, decimal, value } };
}

/** True when the text carries a unit of its own. */
export function typedUnitOfFigure(text: string): AnyUnit | null {
  const alone = parseFigureText(text);
  return alone.ok ? alone.figure.unit : null;
}

/**
 * `text` read as a figure in `unit` (a unit typed must be `unit`, or convertible into it exactly
 * when `convert` is set; `difference` for a step or an uncertainty, where °C and °F offsets do not apply): the decimal text in `unit`, or a message naming the record's unit.
 */
export function figureTextIn(
  text: string,
  unit: AnyUnit,
  opts: { convert?: boolean; difference?: boolean } = {},
): { ok: true; text: string; figure: EnteredFigure } | { ok: false; message: string } {
  const parsed = parseFigureText(text, { defaultUnit: unit });
  if (!parsed.ok) return parsed;
  if (parsed.figure.unit === unit) return { ok: true, text: parsed.figure.text, figure: parsed.figure };
  const symbol = unitTable[unit].symbol || 'no unit';
  if (!opts.convert) return { ok: false, message: `enter it in ${symbol} (this record's unit), or leave the unit off` };
  if (quantityOf(parsed.figure.unit) !== quantityOf(unit)) return { ok: false, message: `enter it in ${symbol} (this record's unit)` };
  const converted = fractionToExactText(convertExact(parsed.figure.value, parsed.figure.unit, unit, { difference: opts.difference ?? false }));
  if (converted === null) return { ok: false, message: `${text.trim()} has no exact value in ${symbol}; enter it in ${symbol}` };
  return { ok: true, text: converted, figure: parsed.figure };
}
