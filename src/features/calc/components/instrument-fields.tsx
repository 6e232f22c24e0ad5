import { useFieldArray, useFormContext, useWatch, type FieldError } from 'react-hook-form';
import { Button } from '@/components/ui/button';
import { Field, Input, Select } from '@/components/ui/field';
import { useDefaultUnits } from '@/features/auth/lib/use-default-units';
import { blankInstrument, keyFromName, type CalcFormValues } from '../lib/calc-form';
import { nextReadingUnit, readingQuantities, temperatureSymbol } from '../lib/units-ui';
import { UnitSelect } from './unit-select';

const MAX_INSTRUMENTS = 10;

function errorAt(errors: unknown, ...path: (string | number)[]): string | undefined {
  let node = errors as Record<string, unknown> | undefined;
  for (const segment of path) node = node?.[segment] as Record<string, unknown> | undefined;
  return (node as FieldError | undefined)?.message;
}

function list(names: string[]): string {
  return names.length <= 2 ? names.join(' and ') : `${names.slice(0, -1).join(', ')} and ${names.at(-1)}`;
}

/**
 * What sharing an instrument means, in plain words: one calibration error, common to every
 * reading taken with it, counted once (GUM 5.2.2: correlation 1).
 */
export function sharedInstrumentNotes(values: CalcFormValues, keyOfRow: readonly string[]): string[] {
  const notes: string[] = [];
  values.instruments.forEach((instrument, i) => {
    const key = keyFromName(instrument.name, i, 'i');
    const rows = values.readings.map((row, r) => ({ row, key: keyOfRow[r] ?? row.name })).filter(({ row }) => row.instrument === key);
    if (rows.length < 2) return;
    const name = instrument.name.trim() || key;
    const what = instrument.basis === 'calibration' ? 'calibration error' : 'error within its maximum permissible error';
    let effect = 'it enters once, with the readings’ effects on the result added together.';
    if (values.model === 'sum') {
      const used = rows.filter(({ row }) => row.sign !== 'none');
      const plus = used.filter(({ row }) => row.sign === 'plus').length;
      const minus = used.length - plus;
      if (used.length >= 2 && plus === minus) effect = 'added once and subtracted once, it cancels.';
      else if (used.length >= 2 && (plus === 0 || minus === 0)) effect = 'it adds up: the same error counts once for each reading, in full.';
    }
    notes.push(`${list(rows.map((r) => r.key))} were read with ${name}, so they share its ${what}: ${effect}`);
  });
  return notes;
}

/** The instruments readings may name: a calibration (U, k) or a maker's maximum permissible error. */
export function InstrumentFields({ notes }: { notes: readonly string[] }) {
  const { register, control, formState } = useFormContext<CalcFormValues>();
  const { fields, append, remove } = useFieldArray({ control, name: 'instruments' });
  const rows = useWatch({ control, name: 'instruments' });
  const firstUnit = useWatch({ control, name: 'readings.0.unit' });
  const defaults = useDefaultUnits();
  const scale = useWatch({ control, name: 'temperatureScale' }) ?? 'degC';
  const figureProps = { inputMode: 'decimal' as const, autoComplete: 'off', className: 'figures', spellCheck: false };

  return (
    <div className="space-y-4">
      {fields.length === 0 && (
        <p className="text-sm text-ink-muted">
          None yet. Name an instrument when its calibration certificate or its maker’s accuracy should count, and pick it on each
          reading taken with it.
        </p>
      )}
      {fields.map((field, index) => {
        const row = rows?.[index];
        const err = (name: string) => errorAt(formState.errors, 'instruments', index, name);
        return (
          <fieldset key={field.id} className="rounded-md border border-rule p-3">
            <legend className="px-1 text-sm font-medium">
              Instrument {index + 1}
              <span className="ml-2 font-normal text-ink-muted">
                key <code className="figures text-ink">{keyFromName(row?.name ?? '', index, 'i')}</code>
              </span>
            </legend>
            <div className="grid gap-3 sm:grid-cols-2">
              <Field label="Name" error={err('name')}>
                <Input {...register(`instruments.${index}.name`)} autoComplete="off" />
              </Field>
              <Field label="What it brings">
                <Select {...register(`instruments.${index}.basis`)}>
                  <option value="calibration">Calibration (U, k)</option>
                  <option value="mpe">Maker’s max. permissible error</option>
                </Select>
              </Field>
              <Field
                label={row?.basis === 'mpe' ? 'Maximum permissible error ±' : 'Expanded uncertainty U'}
                hint={row?.basis === 'mpe' ? 'Counted as rectangular: u = MPE/√3 (GUM 4.3.7).' : 'From the certificate: u = U/k (GUM 4.3.3).'}
                error={err('figure')}
              >
                <Input {...register(`instruments.${index}.figure`)} {...figureProps} />
              </Field>
              <Field label="Unit">
                <UnitSelect quantities={readingQuantities} {...register(`instruments.${index}.unit`)} />
              </Field>
              {row?.basis !== 'mpe' && (
                <Field label="Coverage factor k" hint="As the certificate states it, usually 2." error={err('coverageFactor')}>
                  <Input {...register(`instruments.${index}.coverageFactor`)} {...figureProps} />
                </Field>
              )}
              <Field
                label={`Its temperature, ${temperatureSymbol(scale)}`}
                hint={`Blank: 20 °C${scale === 'degF' ? ' (68 °F)' : ''}. Used when a length is corrected to 20 °C, except for readings taken at the part’s temperature.`}
                error={err('temperatureC')}
              >
                <Input {...register(`instruments.${index}.temperatureC`)} {...figureProps} />
              </Field>
            </div>
            <div className="mt-3 flex justify-end" data-print="hide">
              <Button variant="quiet" size="sm" onClick={() => remove(index)}>
                Remove instrument {index + 1}
              </Button>
            </div>
          </fieldset>
        );
      })}
      {notes.length > 0 && (
        <ul className="space-y-1 text-sm" aria-label="Shared instruments">
          {notes.map((note) => (
            <li key={note} className="flex gap-2">
              <SharedMark />
              <span>{note}</span>
            </li>
          ))}
        </ul>
      )}
      <div data-print="hide">
        <Button onClick={() => append(blankInstrument(fields.length + 1, nextReadingUnit(firstUnit, defaults)))} disabled={fields.length >= MAX_INSTRUMENTS}>
          Add an instrument
        </Button>
      </div>
    </div>
  );
}

/** The mark for a shared instrument: two lines joined, as in the budget table. */
export function SharedMark({ className }: { className?: string }) {
  return (
    <svg viewBox="0 0 16 16" className={className ?? 'mt-1 size-3.5 shrink-0 text-accent'} aria-hidden="true">
      <path d="M2 4h6v8H2M8 8h6" fill="none" stroke="currentColor" strokeWidth="1.6" strokeLinejoin="round" />
    </svg>
  );
}
