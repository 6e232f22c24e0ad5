import type { AnyUnit, QuantityKind } from '@shared/measure/quantities';
import { unitChoiceGroups, unitChoiceLabel } from '../lib/unit-choices';

/**
 * The `<option>`s of a unit picker: one quantity's units as a plain list, or every quantity's
 * in labelled groups. `extra` keeps a stored unit the list would not offer (so a select never
 * shows a unit it does not hold).
 */
export function UnitOptions({ quantity, withRatio = false, extra }: { quantity: QuantityKind | null; withRatio?: boolean; extra?: AnyUnit }) {
  const groups = unitChoiceGroups(quantity, { withRatio });
  const offered = groups.some((g) => g.units.includes(extra as AnyUnit));
  const option = (u: AnyUnit) => (
    <option key={u} value={u}>
      {unitChoiceLabel(u)}
    </option>
  );
  return (
    <>
      {extra && !offered && option(extra)}
      {groups.length === 1
        ? groups[0]!.units.map(option)
        : groups.map((g) => (
            <optgroup key={g.quantity} label={g.heading}>
              {g.units.map(option)}
            </optgroup>
          ))}
    </>
  );
}
