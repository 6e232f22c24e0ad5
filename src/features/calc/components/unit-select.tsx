import type { ComponentProps } from 'react';
import type { QuantityKind } from '@shared/measure/quantities';
import { Select } from '@/components/ui/field';
import { quantityLabels, unitOptionLabel, unitsOf } from '../lib/units-ui';

/** A unit picker: the units of one quantity, or of several grouped under their quantity's name. */
export function UnitSelect({ quantities, children, ...props }: ComponentProps<typeof Select> & { quantities: readonly QuantityKind[] }) {
  return (
    <Select {...props}>
      {children}
      {quantities.length === 1
        ? unitsOf(quantities[0]!).map((unit) => (
            <option key={unit} value={unit}>
              {unitOptionLabel(unit)}
            </option>
          ))
        : quantities.map((quantity) => (
            <optgroup key={quantity} label={quantityLabels[quantity]}>
              {unitsOf(quantity).map((unit) => (
                <option key={unit} value={unit}>
                  {unitOptionLabel(unit)}
                </option>
              ))}
            </optgroup>
          ))}
    </Select>
  );
}
