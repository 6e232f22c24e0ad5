/**
 * Reading lengths the way people type them: "0.5642 in", "0.5642\"", "564.2 thou", "3.5 mils",
 * "2.9 tenths", "14.33mm", "12 µm", "12 microns". The text is kept, so "0.5640" keeps its four
 * places and the resolution they imply.
 */
import { parseDecimalText, type ExactDecimal } from './decimal';
import {
  decimalToPicometres,
  lastPlacePicometres,
  MAX_LENGTH_PM,
  maxExactDecimals,
  type LengthUnit,
  unitNames,
} from './units';

/** A length as entered: its text, its unit, its exact value and the step of its last digit. */
export interface EnteredLength {
  /** The number exactly as typed, normalised only for sign and a leading point ("0.5640", ".5" → "0.5"). */
  readonly text: string;
  readonly unit: LengthUnit;
  readonly decimal: ExactDecimal;
  /** The value in integer picometres. */
  readonly pm: bigint;
  /** One step of the last digit typed, in picometres: the resolution the text implies. */
  readonly lastPlacePm: bigint;
}

/** Result of parsing: the length, or a message that says what was expected. */
export type ParseLengthResult = { ok: true; length: EnteredLength } | { ok: false; message: string };

/** Every spelling we accept for each unit, lower-case. */
export const unitAliases: Readonly<Record<LengthUnit, readonly string[]>> = {
  in: ['in', 'in.', 'inch', 'inches', '"', '″', "''", '”'],
  thou: ['thou', 'thous', 'th', 'mil', 'mils', 'thousandth', 'thousandths'],
  tenth: ['tenth', 'tenths', 'tenth of a thou', 'tenths of a thou', 'ten-thousandth', 'ten-thousandths'],
  mm: ['mm', 'millimetre', 'millimetres', 'millimeter', 'millimeters'],
  um: ['um', 'µm', 'μm', 'micron', 'microns', 'micrometre', 'micrometres', 'micrometer', 'micrometers'],
};

const aliasToUnit = new Map<string, LengthUnit>(
  (Object.entries(unitAliases) as [LengthUnit, readonly string[]][]).flatMap(([unit, aliases]) =>
    aliases.map((alias) => [alias, unit] as const),
  ),
);

/** What to tell someone whose text is not a length. */
export const EXPECTED_LENGTH =
  'Enter a number and a unit, e.g. 0.5642 in, 0.5642", 3.5 thou, 2.9 tenths, 14.33 mm or 12 µm.';

const UNIT_LIST = 'in (or "), thou (or mil), tenths, mm or µm (or micron)';

/** Looks a unit spelling up (case-insensitive, inner spaces collapsed); undefined when unknown. */
export function lookupUnit(text: string): LengthUnit | undefined {
  return aliasToUnit.get(text.trim().toLowerCase().replace(/\s+/g, ' '));
}

const MAX_INPUT = 64;
const NUMBER_THEN_REST = /^([+-]?(?:\d+(?:\.\d*)?|\.\d+))(.*)$/;

/**
 * Parses a typed length. `defaultUnit` is used when the text has no unit (a form whose unit is
 * chosen beside the box). Never throws; refusals name what was expected.
 */
export function parseLength(input: string, options: { defaultUnit?: LengthUnit } = {}): ParseLengthResult {
  const text = input.trim().replace(/^[−–]/, '-');
  if (text.length === 0) return { ok: false, message: EXPECTED_LENGTH };
  if (text.length > MAX_INPUT) return { ok: false, message: `That is too long for a length. ${EXPECTED_LENGTH}` };
  const match = NUMBER_THEN_REST.exec(text);
  if (!match) return { ok: false, message: `"${text}" does not start with a number. ${EXPECTED_LENGTH}` };
  const numberText = match[1] ?? '';
  const rest = (match[2] ?? '').trim();
  if (/^,\d/.test(match[2] ?? '')) {
    return { ok: false, message: 'Use a decimal point, not a comma (14.33 mm, not 14,33 mm).' };
  }
  if (/^\/\s*\d/.test(rest)) {
    return { ok: false, message: 'Fractions are not read; enter the decimal (1/64 in is 0.015625 in).' };
  }
  if (/^e[+-]?\d/i.test(rest)) {
    return { ok: false, message: 'Write the number out in full (0.0001 in, not 1e-4 in).' };
  }
  let unit: LengthUnit | undefined;
  if (rest.length === 0) {
    unit = options.defaultUnit;
    if (!unit) return { ok: false, message: `Add a unit after the number: ${UNIT_LIST}.` };
  } else {
    unit = lookupUnit(rest);
    if (!unit) return { ok: false, message: `"${rest}" is not a unit Benchproof reads. Use ${UNIT_LIST}.` };
  }
  const decimal = parseDecimalText(numberText);
  if (!decimal) return { ok: false, message: EXPECTED_LENGTH };
  const pm = decimalToPicometres(decimal, unit);
  const lastPlacePm = lastPlacePicometres(decimal, unit);
  if (pm === null || lastPlacePm === null) {
    return {
      ok: false,
      message: `Too many decimal places for ${unitNames[unit]}: at most ${maxExactDecimals[unit]} can be held exactly.`,
    };
  }
  if ((pm < 0n ? -pm : pm) > MAX_LENGTH_PM) {
    return { ok: false, message: 'That is longer than 2 m; Benchproof reads lengths up to 2 m (78.74 in).' };
  }
  const normalised = numberText.replace(/^\+/, '').replace(/^(-?)\./, (_, sign: string) => `${sign}0.`).replace(/\.$/, '');
  return { ok: true, length: { text: normalised, unit, decimal, pm, lastPlacePm } };
}
