import type { ComponentProps } from 'react';
import { unitSymbols, type LengthUnit } from '@shared/measure/units';
import { Input } from '@/components/ui/field';
import { cn } from '@/lib/cn';

/**
 * A length box with its unit printed beside it, so nobody types inches into a millimetre
 * record. Put the unit in the field's label too: the printed symbol is for the eye only.
 */
export function LengthInput({ unit, className, ...props }: ComponentProps<'input'> & { unit: LengthUnit }) {
  return (
    <div className="flex items-stretch">
      <Input
        inputMode="decimal"
        autoComplete="off"
        spellCheck={false}
        className={cn('figures rounded-r-none', className)}
        {...props}
      />
      <span
        aria-hidden="true"
        className="figures inline-flex min-w-12 items-center justify-center rounded-r-md border border-l-0 border-line bg-paper-2 px-2 text-sm text-ink-muted"
      >
        {unitSymbols[unit]}
      </span>
    </div>
  );
}
