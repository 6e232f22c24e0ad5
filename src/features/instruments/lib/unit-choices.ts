import { quantityKinds, quantityNames, unitTable, unitsOf, type AnyUnit, type QuantityKind } from '@shared/measure/quantities';

/** Group headings of the unit pickers. */
export const quantityHeadings = quantityNames;

/**
 * What a unit picker says for a unit: lengths by name as they always were ("inches", "thou
 * (0.001 in)"), the others by name and symbol ("pound-force feet (lbf·ft)", "bar"), and
 * "ratio (no unit)" for a ratio.
 */
export function unitChoiceLabel(unit: AnyUnit): string {
  const { name, symbol, quantity } = unitTable[unit];
  if (quantity === 'length' || name.includes('(') || symbol === '' || symbol === name) return name;
  return `${name} (${symbol})`;
}

/** One group of a unit picker. */
export interface UnitChoiceGroup {
  quantity: QuantityKind;
  heading: string;
  units: readonly AnyUnit[];
}

/**
 * The units a picker offers, grouped by quantity in picker order: only `quantity`'s when given
 * (a torque wrench reads torque), else every quantity's; `withRatio` adds the ratio's "1" (specs).
 */
export function unitChoiceGroups(quantity: QuantityKind | null, opts: { withRatio?: boolean } = {}): UnitChoiceGroup[] {
  const quantities = quantity ? [quantity] : quantityKinds.filter((q) => q !== 'ratio' || opts.withRatio);
  return quantities.map((q) => ({ quantity: q, heading: quantityHeadings[q], units: unitsOf(q) }));
}
