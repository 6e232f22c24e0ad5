import { useId } from 'react';
import type { UnitSystem } from '@shared/measure/format';
import { errorMessage } from '@/lib/api';
import { cn } from '@/lib/cn';
import type { UnitChoice } from '../lib/units';

const options: { system: UnitSystem; label: string; units: string }[] = [
  { system: 'imperial', label: 'Imperial', units: 'in · thou' },
  { system: 'metric', label: 'Metric', units: 'mm · µm' },
];

/**
 * Imperial or metric for every figure on the page: two radio buttons (arrow keys move between
 * them), remembered in this browser or in the account.
 */
export function UnitsSwitch({ choice, className }: { choice: UnitChoice; className?: string }) {
  const name = useId();
  const hintId = `${name}-hint`;
  return (
    <fieldset className={cn('flex flex-wrap items-center gap-x-3 gap-y-1', className)} data-print="hide" aria-describedby={hintId}>
      <legend className="sr-only">Units for figures</legend>
      <span aria-hidden="true" className="text-xs font-medium text-ink-muted">
        Units
      </span>
      <span className="inline-flex rounded-md border border-line bg-paper p-0.5">
        {options.map((option) => {
          const checked = choice.system === option.system;
          return (
            <label
              key={option.system}
              className={cn(
                'relative flex cursor-pointer items-center gap-1.5 rounded-sm px-2.5 py-1 text-sm has-focus-visible:outline-2 has-focus-visible:outline-offset-1 has-focus-visible:outline-accent',
                checked ? 'bg-ink text-paper' : 'text-ink hover:bg-paper-2',
              )}
            >
              <input
                type="radio"
                name={name}
                value={option.system}
                checked={checked}
                onChange={() => choice.setSystem(option.system)}
                className="sr-only"
              />
              <span className="font-medium">{option.label}</span>
              <span className={cn('figures text-xs', checked ? 'text-paper/80' : 'text-ink-muted')}>{option.units}</span>
            </label>
          );
        })}
      </span>
      <span id={hintId} className="text-xs text-ink-muted">
        {choice.chosen === null
          ? 'Shown in the builder’s units until you pick.'
          : choice.remembered === 'account'
            ? 'Remembered for your account.'
            : 'Remembered in this browser.'}
      </span>
      {choice.saveError != null && (
        <span role="alert" className="text-xs text-danger">
          Not saved to your account: {errorMessage(choice.saveError)} It still applies here.
        </span>
      )}
    </fieldset>
  );
}
