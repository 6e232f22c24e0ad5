import { useFormContext, useWatch } from 'react-hook-form';
import { lengthUnits } from '@shared/measure/units';
import { Field, Input, Select } from '@/components/ui/field';
import type { CalcFormValues } from '../lib/calc-form';

/** The spec to judge against: limits, rule, and the page-only preferred band, reject limit and source. */
export function SpecFields() {
  const { register, control, formState } = useFormContext<CalcFormValues>();
  const enabled = useWatch({ control, name: 'spec.enabled' });
  const errors = formState.errors.spec;

  return (
    <div className="space-y-3">
      <label className="flex items-center gap-2 text-sm font-medium">
        <input type="checkbox" {...register('spec.enabled')} className="size-4 accent-[var(--color-accent)]" />
        Judge against a spec
      </label>
      {enabled && (
        <>
          <div className="grid gap-3 sm:grid-cols-3">
            <Field label="Min" hint="Blank for no lower limit." error={errors?.min?.message}>
              <Input {...register('spec.min')} inputMode="decimal" autoComplete="off" className="figures" />
            </Field>
            <Field label="Max" hint="Blank for no upper limit." error={errors?.max?.message}>
              <Input {...register('spec.max')} inputMode="decimal" autoComplete="off" className="figures" />
            </Field>
            <Field label="Unit" error={errors?.unit?.message}>
              <Select {...register('spec.unit')}>
                {lengthUnits.map((unit) => (
                  <option key={unit} value={unit}>
                    {unit === 'um' ? 'µm' : unit === 'tenth' ? 'tenths' : unit}
                  </option>
                ))}
              </Select>
            </Field>
          </div>
          <fieldset>
            <legend className="text-sm font-medium">Decision rule</legend>
            <div className="mt-1 flex flex-col gap-1 text-sm">
              <label className="flex items-start gap-2">
                <input type="radio" value="guarded" {...register('spec.rule')} className="mt-1 accent-[var(--color-accent)]" />
                <span>
                  <strong className="font-medium">Guarded</strong> (ISO 14253-1): within spec only when the value is at least U inside the limits.
                </span>
              </label>
              <label className="flex items-start gap-2">
                <input type="radio" value="simple" {...register('spec.rule')} className="mt-1 accent-[var(--color-accent)]" />
                <span>
                  <strong className="font-medium">Simple</strong>: the value alone against the limits; never “too close to call”.
                </span>
              </label>
            </div>
          </fieldset>
          <details className="text-sm">
            <summary className="cursor-pointer text-ink-muted">Preferred band, reject limit, source</summary>
            <p className="mt-2 text-xs text-ink-muted">Drawn and judged on this page; the calculator API takes min, max and rule only.</p>
            <div className="mt-2 grid gap-3 sm:grid-cols-3">
              <Field label="Preferred min" error={errors?.preferredMin?.message}>
                <Input {...register('spec.preferredMin')} inputMode="decimal" autoComplete="off" className="figures" />
              </Field>
              <Field label="Preferred max" error={errors?.preferredMax?.message}>
                <Input {...register('spec.preferredMax')} inputMode="decimal" autoComplete="off" className="figures" />
              </Field>
              <Field label="Reject limit" hint="Scrap at or past this." error={errors?.reject?.message}>
                <Input {...register('spec.reject')} inputMode="decimal" autoComplete="off" className="figures" />
              </Field>
            </div>
            <Field label="Source" hint="Where the figures come from: manual and section, standard, or common practice." className="mt-3">
              <Input {...register('spec.source')} autoComplete="off" />
            </Field>
          </details>
        </>
      )}
    </div>
  );
}
