import type { ComponentProps } from 'react';
import { unitTable, type AnyUnit } from '@shared/measure/quantities';
import { Input } from '@/components/ui/field';
import { cn } from '@/lib/cn';

/**
 * A figure box with its unit printed beside it, so nobody types inches into a millimetre
 * record or psi into a bar one. Put the unit in the field's label too: the printed symbol is
 * for the eye only. A ratio shows ":1".
 */
export function FigureInput({ unit, className, ...props }: ComponentProps<'input'> & { unit: AnyUnit }) {
  const symbol = unit === '1' ? ':1' : unitTable[unit].symbol;
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
        className="figures inline-flex min-w-12 items-center justify-center rounded-r-md border border-l-0 border-line bg-paper-2 px-2 text-sm whitespace-nowrap text-ink-muted"
      >
        {symbol}
      </span>
    </div>
  );
}
