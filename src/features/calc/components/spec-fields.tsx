import { useFormContext, useWatch } from 'react-hook-form';
import { quantityKinds, type QuantityKind } from '@shared/measure/quantities';
import { Field, Input } from '@/components/ui/field';
import type { CalcFormValues } from '../lib/calc-form';
import { UnitSelect } from './unit-select';

/** The spec to judge against: limits in any unit of the result's quantity, the rule, a preferred band, a reject limit. */
export function SpecFields({ quantity }: { quantity: QuantityKind | null }) {
  const { register, control, formState } = useFormContext<CalcFormValues>();
  const enabled = useWatch({ control, name: 'spec.enabled' });
  const errors = formState.errors.spec;
  const figureProps = { inputMode: 'decimal' as const, autoComplete: 'off', className: 'figures', spellCheck: false };

  return (
    <div className="space-y-3">
      <label className="flex items-center gap-2 text-sm font-medium">
        <input type="checkbox" {...register('spec.enabled')} className="size-4 accent-[var(--color-accent)]" />
        Judge against a spec
      </label>
      {enabled && (
        <>
          <div className="grid grid-cols-2 items-end gap-3 sm:grid-cols-3">
            <Field label="Min" hint="Blank for no lower limit." error={errors?.min?.message}>
              <Input {...register('spec.min')} {...figureProps} />
            </Field>
            <Field label="Max" hint="Blank for no upper limit." error={errors?.max?.message}>
              <Input {...register('spec.max')} {...figureProps} />
            </Field>
            <Field label="Unit" hint={quantity === 'ratio' ? 'A ratio has no unit.' : undefined} error={errors?.unit?.message} className="col-span-2 sm:col-span-1">
              <UnitSelect quantities={quantity ? [quantity] : quantityKinds} {...register('spec.unit')} />
            </Field>
          </div>
          <fieldset>
            <legend className="text-sm font-medium">Decision rule</legend>
            <div className="mt-1 flex flex-col gap-1 text-sm">
              <label className="flex items-start gap-2">
                <input type="radio" value="guarded" {...register('spec.rule')} className="mt-1 accent-[var(--color-accent)]" />
                <span>
                  <strong className="font-medium">Guarded</strong> (ISO 14253-1): within spec only when the whole coverage interval lies
                  inside the limits; out of spec only when it lies wholly outside.
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
          <details className="text-sm" open={Boolean(errors?.preferredMin || errors?.preferredMax || errors?.reject) || undefined}>
            <summary className="cursor-pointer text-ink-muted">Preferred band, reject limit, source</summary>
            <div className="mt-2 grid grid-cols-2 items-end gap-3 sm:grid-cols-3">
              <Field label="Preferred min" error={errors?.preferredMin?.message}>
                <Input {...register('spec.preferredMin')} {...figureProps} />
              </Field>
              <Field label="Preferred max" error={errors?.preferredMax?.message}>
                <Input {...register('spec.preferredMax')} {...figureProps} />
              </Field>
              <Field label="Reject limit" hint="Scrap at or past this." error={errors?.reject?.message} className="col-span-2 sm:col-span-1">
                <Input {...register('spec.reject')} {...figureProps} />
              </Field>
            </div>
            <Field label="Source" hint="Where the figures come from: manual and section, standard, or common practice. Shown here only." className="mt-3">
              <Input {...register('spec.source')} autoComplete="off" />
            </Field>
          </details>
        </>
      )}
    </div>
  );
}
