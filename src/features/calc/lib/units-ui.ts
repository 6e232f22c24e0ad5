import {
  defaultUnitFor,
  isAnyUnit,
  quantityKinds,
  quantityNames,
  quantityOf,
  unitTable,
  unitsOf,
  type AnyUnit,
  type DefaultUnitSystem,
  type QuantityKind,
  type TemperatureScale,
} from '@shared/measure/quantities';
import { noDefaultUnits, type DefaultUnits } from '@/features/auth/lib/default-units';

/** Group headings of the unit pickers. */
export const quantityLabels = quantityNames;

/** The quantities a reading can hold (a ratio is worked out, not read off an instrument). */
export const readingQuantities: readonly QuantityKind[] = quantityKinds.filter((q) => q !== 'ratio');

/** What a picker shows for a unit: its symbol, or "1 (no unit)" for a ratio. */
export function unitOptionLabel(unit: AnyUnit): string {
  const { symbol, name } = unitTable[unit];
  if (unit === '1') return 'ratio';
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

/**
 * The unit a new figure of `quantity` starts in: the builder's default units when they chose
 * them, else the system of a unit already on the page (`near`), else imperial.
 */
export function startingUnit(quantity: QuantityKind, near: AnyUnit | undefined, defaults: DefaultUnits = noDefaultUnits): AnyUnit {
  const system = defaults.system ?? (near ? systemOfUnit(near) : 'imperial');
  return defaultUnitFor(quantity, system, defaults.temperatureScale ?? undefined);
}

/**
 * The unit of a reading row added after one in `last`. Without defaults it copies the row above.
 * With them it keeps the quantity of the row above and its unit when that is already in the
 * builder's units (thou stays thou for an imperial builder), otherwise it proposes their default.
 */
export function nextReadingUnit(last: AnyUnit | undefined, defaults: DefaultUnits = noDefaultUnits): AnyUnit {
  if (!last) return startingUnit('length', undefined, defaults);
  if (!defaults.system && !defaults.temperatureScale) return last;
  const quantity = quantityOf(last);
  const proposed = startingUnit(quantity, last, defaults);
  if (quantity === 'temperature' && defaults.temperatureScale) return defaults.temperatureScale;
  if (unitTable[last].system === 'any') return last;
  return systemOfUnit(last) === systemOfUnit(proposed) ? last : proposed;
}

/**
 * The scale the calculator's temperature boxes are in: the builder's chosen scale, else °F for
 * an inch shop and °C otherwise (the rule of `defaultUnitFor`); °C when signed out.
 */
export function temperatureScaleFor(defaults: DefaultUnits = noDefaultUnits): TemperatureScale {
  return defaultUnitFor('temperature', defaults.system ?? 'metric', defaults.temperatureScale ?? undefined) === 'degF' ? 'degF' : 'degC';
}

/** "°C" or "°F", for labels. */
export function temperatureSymbol(scale: TemperatureScale): string {
  return unitTable[scale].symbol;
}

export { unitsOf };
