/**
 * Lengths stored as people typed them: decimal text in a record's unit ("0.5640" in in). The
 * text keeps its trailing zeros (the resolution they imply); the engine reads it exactly.
 */
import { z } from 'zod';
import { parseLength, type EnteredLength } from './parse';
import { picometresPerUnit, maxExactDecimals, type LengthUnit, unitSymbols } from './units';
import { formatNumber } from './format';

/** Text of a length typed into a form: up to 64 characters, parsed by `parseLength`. */
export const lengthTextSchema = z.string({ error: 'enter a length' }).trim().min(1, 'enter a length').max(64, 'that is too long for a length');

/**
 * Parses `text` as a length in `unit`. A unit typed in the text must be `unit` (or one exactly
 * convertible into it when `convert` is set); returns the decimal text in `unit` or a message.
 */
export function lengthTextIn(
  text: string,
  unit: LengthUnit,
  opts: { convert?: boolean } = {},
): { ok: true; text: string; length: EnteredLength } | { ok: false; message: string } {
  const parsed = parseLength(text, { defaultUnit: unit });
  if (!parsed.ok) return parsed;
  if (parsed.length.unit === unit) return { ok: true, text: parsed.length.text, length: parsed.length };
  if (!opts.convert) {
    return { ok: false, message: `enter it in ${unitSymbols[unit]} (this record's unit), or leave the unit off` };
  }
  const converted = picometresToExactText(parsed.length.pm, unit);
  if (converted === null) {
    return { ok: false, message: `${text.trim()} has no exact value in ${unitSymbols[unit]}; enter it in ${unitSymbols[unit]}` };
  }
  return { ok: true, text: converted, length: parsed.length };
}

/** Exact decimal text of a length in `unit`, or null when it needs more places than the unit holds. */
export function picometresToExactText(pm: bigint, unit: LengthUnit): string | null {
  const per = picometresPerUnit[unit];
  const places = maxExactDecimals[unit];
  const scale = 10n ** BigInt(places);
  if ((pm * scale) % per !== 0n) return null;
  const text = formatNumber(pm, unit, places).replace('−', '-');
  return text.includes('.') ? text.replace(/0+$/, '').replace(/\.$/, '') : text;
}

/** A stored decimal text (from NUMERIC) as the number the engine's JSON schemas take. */
export function decimalTextToNumber(text: string): number {
  return Number(text);
}
