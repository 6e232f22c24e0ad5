import { useState } from 'react';
import { useFieldArray, useFormContext, useWatch, type FieldError } from 'react-hook-form';
import { formulaTemplates } from '@shared/measure/formula-templates';
import { quantityKinds, type QuantityKind } from '@shared/measure/quantities';
import { Button } from '@/components/ui/button';
import { Field, Input, Select, Textarea } from '@/components/ui/field';
import { useDefaultUnits } from '@/features/auth/lib/use-default-units';
import { blankConstant, type CalcFormValues } from '../lib/calc-form';
import { nextReadingUnit, quantityLabels } from '../lib/units-ui';
import { UnitSelect } from './unit-select';

const MAX_CONSTANTS = 10;

function errorAt(errors: unknown, ...path: (string | number)[]): string | undefined {
  let node = errors as Record<string, unknown> | undefined;
  for (const segment of path) node = node?.[segment] as Record<string, unknown> | undefined;
  return (node as FieldError | undefined)?.message;
}

export interface ModelFieldsProps {
  /** Keys of the readings, for the formula. */
  readingKeys: readonly string[];
  /** The result's quantity when the page can tell; null to offer every unit. */
  quantity: QuantityKind | null;
  onApplyTemplate: (id: string) => void;
  /** What the engine said about the formula, shown beside it. */
  formulaProblem?: string | undefined;
}

/** The measurement model: a signed sum of readings, or a formula over them, and the result's unit. */
export function ModelFields({ readingKeys, quantity, onApplyTemplate, formulaProblem }: ModelFieldsProps) {
  const { register, control, formState } = useFormContext<CalcFormValues>();
  const model = useWatch({ control, name: 'model' });
  const template = useWatch({ control, name: 'template' });
  const { fields, append, remove } = useFieldArray({ control, name: 'constants' });
  const [picked, setPicked] = useState(template || formulaTemplates[0]!.id);
  const pickedTemplate = formulaTemplates.find((t) => t.id === picked);
  const firstUnit = useWatch({ control, name: 'readings.0.unit' });
  const defaults = useDefaultUnits();
  const constantRows = useWatch({ control, name: 'constants' });
  const figureProps = { inputMode: 'decimal' as const, autoComplete: 'off', className: 'figures', spellCheck: false };

  return (
    <div className="space-y-4">
      <fieldset>
        <legend className="text-sm font-medium">The result is</legend>
        <div className="mt-1 flex flex-col gap-1 text-sm">
          <label className="flex items-start gap-2">
            <input type="radio" value="sum" {...register('model')} className="mt-1 accent-[var(--color-accent)]" />
            <span>
              <strong className="font-medium">a signed sum</strong> of readings (each added, subtracted or left out): a clearance, a
              stack-up.
            </span>
          </label>
          <label className="flex items-start gap-2">
            <input type="radio" value="formula" {...register('model')} className="mt-1 accent-[var(--color-accent)]" />
            <span>
              <strong className="font-medium">a formula</strong> over the readings: a volume, a ratio, anything with × ÷ ^ or √.
            </span>
          </label>
        </div>
      </fieldset>

      <div className="rounded-md border border-rule bg-paper-2/40 p-3">
        <div className="flex flex-col gap-2 sm:flex-row sm:items-end">
          <Field label="Start from a template" className="min-w-0 flex-1">
            <Select value={picked} onChange={(event) => setPicked(event.target.value)}>
              {formulaTemplates.map((t) => (
                <option key={t.id} value={t.id}>
                  {t.name} ({quantityLabels[t.result].toLowerCase()})
                </option>
              ))}
            </Select>
          </Field>
          <Button onClick={() => onApplyTemplate(picked)}>Use this template</Button>
        </div>
        {pickedTemplate && (
          <p className="mt-2 text-xs text-ink-muted">
            {pickedTemplate.explanation} <span className="figures text-ink">{pickedTemplate.formula}</span>. Replaces the readings
            above with the ones it needs.
          </p>
        )}
      </div>

      {model === 'formula' && (
        <>
          <Field
            label="Formula"
            hint={
              <>
                Over the reading keys{readingKeys.length > 0 && <>: {readingKeys.map((k, i) => <span key={k}>{i > 0 && ', '}<code className="figures text-ink">{k}</code></span>)}</>}
                {fields.length > 0 && ' and the constants below'}. + − × ÷ ^, brackets, sqrt(…) and pi. Put spaces round a minus
                between names.
              </>
            }
            error={errorAt(formState.errors, 'formula') ?? formulaProblem}
          >
            <Textarea {...register('formula')} rows={2} className="figures" spellCheck={false} autoComplete="off" />
          </Field>

          <fieldset className="space-y-3">
            <legend className="text-sm font-medium">Constants</legend>
            <p className="text-xs text-ink-muted">Exact figures with a unit and no uncertainty: a target size, 180°.</p>
            {fields.map((field, index) => {
              const hint = (constantRows?.[index]?.hint ?? '').trim();
              return (
                <div key={field.id} className="grid items-start gap-2 sm:grid-cols-[minmax(0,1fr)_minmax(0,1fr)_minmax(0,1fr)_auto]">
                  <Field label={`Constant ${index + 1} name`} error={errorAt(formState.errors, 'constants', index, 'name')}>
                    <Input {...register(`constants.${index}.name`)} autoComplete="off" className="figures" spellCheck={false} />
                  </Field>
                  <Field label="Value" error={errorAt(formState.errors, 'constants', index, 'value')}>
                    <Input {...register(`constants.${index}.value`)} {...figureProps} />
                  </Field>
                  <Field label="Unit">
                    <UnitSelect quantities={quantityKinds} {...register(`constants.${index}.unit`)} />
                  </Field>
                  <div className="self-end" data-print="hide">
                    <Button variant="quiet" size="sm" onClick={() => remove(index)} aria-label={`Remove constant ${index + 1}`}>
                      Remove
                    </Button>
                  </div>
                  {hint && <p className="text-xs text-ink-muted sm:col-span-4">{hint}</p>}
                </div>
              );
            })}
            <div data-print="hide">
              <Button size="sm" onClick={() => append(blankConstant(fields.length + 1, nextReadingUnit(firstUnit, defaults)))} disabled={fields.length >= MAX_CONSTANTS}>
                Add a constant
              </Button>
            </div>
          </fieldset>
        </>
      )}

      <Field
        label="Result in"
        hint={`Automatic: the spec’s unit, else the readings’.${quantity ? ` The result is ${quantity === 'ratio' ? 'a ratio' : `a ${quantity}`}.` : ''}`}
        error={errorAt(formState.errors, 'resultUnit')}
        className="sm:max-w-xs"
      >
        <UnitSelect quantities={quantity ? [quantity] : quantityKinds} {...register('resultUnit')}>
          <option value="">automatic</option>
        </UnitSelect>
      </Field>
    </div>
  );
}
