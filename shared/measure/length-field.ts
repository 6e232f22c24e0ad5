/**
 * Checks shared by the measure schemas: a number that is a length in a sibling `unit` field must
 * be finite, within ±2 m, and exactly a whole number of picometres (so it is held as entered).
 */
import { decimalFromNumber, type ExactDecimal } from './decimal';
import { figureToDecimal, type Figure } from './figures';
import { decimalToPicometres, MAX_LENGTH_PM, maxExactDecimals, type LengthUnit, unitNames } from './units';

/** A problem found by `lengthFieldProblem`, with the message to show. */
export type LengthFieldProblem = { message: string };

/** Bounds a particular length field accepts, in picometres. */
export interface LengthFieldBounds {
  /** Smallest allowed value; `exclusive` makes it a strict bound. */
  readonly minPm?: bigint;
  readonly minExclusive?: boolean;
  /** Largest allowed magnitude; defaults to 2 m. */
  readonly maxPm?: bigint;
  /** How to describe the bound in a message, e.g. "greater than 0". */
  readonly minText?: string;
  readonly maxText?: string;
}

/** The exact value of a length number, or null if it is not finite or too finely divided. */
export function lengthNumberToPicometres(value: Figure, unit: LengthUnit): bigint | null {
  const decimal: ExactDecimal | null = typeof value === 'number' ? decimalFromNumber(value) : figureToDecimal(value);
  return decimal ? decimalToPicometres(decimal, unit) : null;
}

/**
 * What is wrong with `value` as a length in `unit` for the field called `field`, or null.
 * Messages start with the field name so they read well on their own.
 */
export function lengthFieldProblem(
  field: string,
  value: Figure,
  unit: LengthUnit,
  bounds: LengthFieldBounds = {},
): LengthFieldProblem | null {
  if (typeof value === 'number' && !Number.isFinite(value)) return { message: `${field} must be a finite number` };
  if (typeof value === 'string' && figureToDecimal(value) === null) return { message: `${field} must be a decimal number like "0.5640"` };
  const pm = lengthNumberToPicometres(value, unit);
  if (pm === null) {
    return {
      message: `${field} has more decimal places than can be held exactly in ${unitNames[unit]} (at most ${maxExactDecimals[unit]})`,
    };
  }
  const maxPm = bounds.maxPm ?? MAX_LENGTH_PM;
  if ((pm < 0n ? -pm : pm) > maxPm) {
    return { message: `${field} must be ${bounds.maxText ?? 'no more than 2 m (78.74 in) in size'}` };
  }
  if (bounds.minPm !== undefined) {
    const tooSmall = bounds.minExclusive ? pm <= bounds.minPm : pm < bounds.minPm;
    if (tooSmall) return { message: `${field} must be ${bounds.minText ?? (bounds.minExclusive ? 'greater than' : 'at least') + ' ' + bounds.minPm.toString() + ' pm'}` };
  }
  return null;
}
