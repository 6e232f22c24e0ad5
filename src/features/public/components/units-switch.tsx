import { useId } from 'react';
import type { UnitSystem } from '@shared/measure/format';
import { errorMessage } from '@/lib/api';
import { cn } from '@/lib/cn';
import type { UnitChoice } from '../lib/units';

const options: { system: UnitSystem; label: string; units: string }[] = [
  { system: 'imperial', label: 'Imperial', units: 'in · thou' },
  { system: 'metric', label: 'Metric', units: 'mm · µm' },
];

const hints: Record<UnitChoice['source'], string> = {
  browser: 'Remembered in this browser.',
  account: 'Remembered for your account.',
  'account-default': 'Your account’s default units, until you pick here.',
  builder: 'Shown in the builder’s units until you pick.',
};

/**
 * Imperial or metric for every figure on the page: two radio buttons (arrow keys move between
 * them), remembered in this browser and the account; until a pick, the account's default units
 * or else the builder's.
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
        {hints[choice.source]}
      </span>
      {choice.saveError != null && (
        <span role="alert" className="text-xs text-danger">
          Not saved to your account: {errorMessage(choice.saveError)} It still applies here.
        </span>
      )}
    </fieldset>
  );
}
