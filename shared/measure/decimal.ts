/**
 * Exact decimal numbers for measured values.
 *
 * A builder who types "0.5640" has told us two things: the value and, by the trailing zero, the
 * resolution. Binary floating point keeps neither reliably (0.1 + 0.2 !== 0.3), so values are held
 * as a bigint coefficient and a count of decimal places until they become integer picometres.
 */

/** A decimal number held exactly: value = coefficient × 10^(−scale), scale ≥ 0. */
export interface ExactDecimal {
  readonly coefficient: bigint;
  readonly scale: number;
}

/** Longest decimal text we accept; far beyond any instrument, and it keeps bigint work small. */
export const MAX_DECIMAL_TEXT_LENGTH = 40;

const DECIMAL_TEXT = /^([+-]?)(\d*)(?:\.(\d*))?$/;

/**
 * Reads plain decimal text ("0.5640", "-3.5", ".5", "12.") exactly, keeping trailing zeros in the
 * scale. Returns null for anything else (exponents, commas, empty text).
 */
export function parseDecimalText(text: string): ExactDecimal | null {
  if (text.length === 0 || text.length > MAX_DECIMAL_TEXT_LENGTH) return null;
  const match = DECIMAL_TEXT.exec(text);
  if (!match) return null;
  const [, sign = '', whole = '', fraction = ''] = match;
  if (whole.length === 0 && fraction.length === 0) return null;
  const digits = `${whole}${fraction}`.replace(/^0+(?=\d)/, '') || '0';
  const magnitude = BigInt(digits);
  return { coefficient: sign === '-' ? -magnitude : magnitude, scale: fraction.length };
}

/**
 * Converts a finite JavaScript number to the shortest decimal that reads back as the same number
 * (ECMAScript Number::toString), so 0.5642 becomes exactly 0.5642 rather than the binary
 * neighbour 0.56420000000000003482… Returns null for NaN and ±Infinity. Trailing zeros the
 * sender typed are already gone by the time a number reaches us (JSON has no 0.5640).
 */
export function decimalFromNumber(value: number): ExactDecimal | null {
  if (!Number.isFinite(value)) return null;
  const text = String(value);
  const exponentAt = text.search(/e/i);
  if (exponentAt < 0) return parseDecimalText(text);
  const mantissa = parseDecimalText(text.slice(0, exponentAt));
  const exponent = Number(text.slice(exponentAt + 1));
  if (!mantissa || !Number.isInteger(exponent)) return null;
  const scale = mantissa.scale - exponent;
  if (scale >= 0) return { coefficient: mantissa.coefficient, scale };
  return { coefficient: mantissa.coefficient * 10n ** BigInt(-scale), scale: 0 };
}

/** Writes an exact decimal back as plain text with exactly `scale` decimal places. */
export function decimalToText(decimal: ExactDecimal): string {
  const negative = decimal.coefficient < 0n;
  const digits = (negative ? -decimal.coefficient : decimal.coefficient).toString();
  if (decimal.scale === 0) return `${negative ? '-' : ''}${digits}`;
  const padded = digits.padStart(decimal.scale + 1, '0');
  const cut = padded.length - decimal.scale;
  return `${negative ? '-' : ''}${padded.slice(0, cut)}.${padded.slice(cut)}`;
}

/** Rounding modes used when an exact quotient must become an integer. */
export type Rounding = 'half-even' | 'half-away-from-zero';

/**
 * Divides two bigints and rounds to an integer. Half-even for computed values (means, midpoints)
 * so repeated rounding carries no bias; half away from zero for display, which is how people
 * round by hand.
 */
export function divideRounded(numerator: bigint, denominator: bigint, rounding: Rounding): bigint {
  if (denominator === 0n) throw new RangeError('divideRounded: division by zero');
  const negative = numerator < 0n !== denominator < 0n;
  const n = numerator < 0n ? -numerator : numerator;
  const d = denominator < 0n ? -denominator : denominator;
  let quotient = n / d;
  const twiceRemainder = (n % d) * 2n;
  if (twiceRemainder > d) quotient += 1n;
  else if (twiceRemainder === d) {
    if (rounding === 'half-away-from-zero' || quotient % 2n === 1n) quotient += 1n;
  }
  return negative ? -quotient : quotient;
}
