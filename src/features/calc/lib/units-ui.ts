import {
  defaultUnitFor,
  isAnyUnit,
  quantityKinds,
  quantityOf,
  unitTable,
  unitsOf,
  type AnyUnit,
  type DefaultUnitSystem,
  type QuantityKind,
} from '@shared/measure/quantities';

/** Group headings of the unit pickers. */
export const quantityLabels: Readonly<Record<QuantityKind, string>> = {
  length: 'Length',
  volume: 'Volume',
  angle: 'Angle',
  torque: 'Torque',
  pressure: 'Pressure',
  temperature: 'Temperature',
  time: 'Time',
  mass: 'Mass',
  ratio: 'Ratio',
};

/** The quantities a reading can hold (a ratio is worked out, not read off an instrument). */
export const readingQuantities: readonly QuantityKind[] = quantityKinds.filter((q) => q !== 'ratio');

/** What a picker shows for a unit: its symbol, or "1 (no unit)" for a ratio. */
export function unitOptionLabel(unit: AnyUnit): string {
  const { symbol, name } = unitTable[unit];
  if (unit === '1') return 'no unit (ratio)';
  return symbol === name ? symbol : `${symbol} · ${name}`;
}

/** A unit's symbol for column headers and labels ("" for a ratio). */
export function unitSymbol(unit: string): string {
  return isAnyUnit(unit) ? unitTable[unit].symbol : unit;
}

/** The unit system a unit suggests for defaults (angles, seconds and ratios say metric). */
export function systemOfUnit(unit: AnyUnit): DefaultUnitSystem {
  return unitTable[unit].system === 'imperial' ? 'imperial' : 'metric';
}

/** Whether a unit is one of `quantity`'s. */
export function isUnitOf(unit: string, quantity: QuantityKind): unit is AnyUnit {
  return isAnyUnit(unit) && quantityOf(unit) === quantity;
}

/** The unit a new figure of `quantity` starts in, following a unit already on the page. */
export function startingUnit(quantity: QuantityKind, near: AnyUnit | undefined): AnyUnit {
  return defaultUnitFor(quantity, near ? systemOfUnit(near) : 'imperial');
}

export { unitsOf };
