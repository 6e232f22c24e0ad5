/**
 * Exact rationals (fraction.js) for measured values, and their decimal text. Values stay exact
 * from the figures typed to the verdict wherever the model allows (sums, differences, means,
 * unit changes: NIST SP 811 factors are exact); uncertainties are estimates and stay doubles.
 */
import Fraction from 'fraction.js';
import { decimalFromNumber, type ExactDecimal } from './decimal';

export { Fraction };

/** An exact decimal as a fraction. */
export function fractionOfDecimal(decimal: ExactDecimal): Fraction {
  return new Fraction(decimal.coefficient, 10n ** BigInt(decimal.scale));
}

/**
 * A double as the fraction of its shortest round-trip decimal (so 0.1 is 1/10, and a computed
 * uncertainty is taken at the value it prints as). Throws on NaN or ±Infinity.
 */
export function fractionOfDouble(value: number): Fraction {
  const decimal = decimalFromNumber(value);
  if (!decimal) throw new RangeError(`not a finite number: ${value}`);
  return fractionOfDecimal(decimal);
}

/**
 * Decimal text of a fraction rounded half away from zero to `decimals` places, with a true
 * minus sign when asked (display) or a hyphen (data).
 */
export function fractionToFixed(value: Fraction, decimals: number, opts: { minus?: '−' | '-' } = {}): string {
  const places = Math.max(0, Math.min(20, Math.trunc(decimals)));
  const scale = 10n ** BigInt(places);
  const numerator = value.n * scale;
  let quotient = numerator / value.d;
  const twiceRemainder = (numerator % value.d) * 2n;
  if (twiceRemainder >= value.d) quotient += 1n;
  const negative = value.s < 0n && quotient !== 0n;
  const digits = quotient.toString().padStart(places + 1, '0');
  const cut = digits.length - places;
  const body = places === 0 ? digits : `${digits.slice(0, cut)}.${digits.slice(cut)}`;
  return `${negative ? (opts.minus ?? '−') : ''}${body}`;
}

/** The shortest plain decimal text of a fraction whose decimal expansion ends (else null). */
export function fractionToExactText(value: Fraction): string | null {
  let d = value.d;
  let places = 0;
  while (d % 10n === 0n) {
    d /= 10n;
    places += 1;
  }
  while (d % 2n === 0n || d % 5n === 0n) {
    d = d % 2n === 0n ? d / 2n : d / 5n;
    places += 1;
    if (places > 40) return null;
  }
  if (d !== 1n) return null;
  const text = fractionToFixed(value, places, { minus: '-' });
  return text.includes('.') ? text.replace(/0+$/, '').replace(/\.$/, '') : text;
}
