/**
 * The units a stored record may carry. An instrument, its zero checks and its readings hold a
 * measured quantity (any unit but the ratio's "1"); a spec may also state a ratio (compression
 * ratio 10.2:1), since a result can be one.
 */
import { z } from 'zod';
import { allUnits, quantityOf, type AnyUnit, type QuantityKind } from './quantities';

/** Units of what an instrument shows: every unit but a ratio's. */
export const readingUnits = allUnits.filter((u): u is Exclude<AnyUnit, '1'> => u !== '1') as unknown as readonly [Exclude<AnyUnit, '1'>, ...Exclude<AnyUnit, '1'>[]];
/** A unit an instrument or reading may carry. */
export type ReadingUnit = Exclude<AnyUnit, '1'>;

/** Schema of a reading's, instrument's or zero check's unit. */
export const readingUnitSchema = z.enum(readingUnits, { error: `unit must be one of ${readingUnits.join(', ')}` });

/** Schema of a spec's unit: any unit, "1" for a ratio. */
export const specUnitSchema = z.enum(allUnits, { error: `unit must be one of ${allUnits.join(', ')}` });

/** Quantities whose figures cannot be below zero (a length, except a deviation from a setting; a volume, a time, a mass). */
export const nonNegativeQuantities: ReadonlySet<QuantityKind> = new Set(['length', 'volume', 'time', 'mass']);

/** True for a length unit. */
export function isLength(unit: AnyUnit): boolean {
  return quantityOf(unit) === 'length';
}
