import { useId, type ReactNode } from 'react';
import { useFieldArray, useForm, type Path } from 'react-hook-form';
import { zodResolver } from '@hookform/resolvers/zod';
import type { z } from 'zod';
import { buildInputSchema, type BuildInput } from '@shared/builds/build.schema';
import { Button } from '@/components/ui/button';
import { Field, Input, Textarea } from '@/components/ui/field';
import { ApiError, errorMessage } from '@/lib/api';

type BuildOutput = z.output<typeof buildInputSchema>;

const MAX_PARTS = 100;

export interface BuildFormProps {
  defaultValues?: BuildInput;
  submitLabel: string;
  pendingLabel: string;
  /** Resolves when saved; a rejected ApiError's field details are shown beside the fields. */
  onSubmit: (values: BuildOutput) => Promise<unknown>;
  /** Extra buttons after the submit button, e.g. Cancel. */
  secondaryAction?: ReactNode;
}

const blankPart = { name: '', serial: '' };

/** Title, what is being built, and the parts with their serials. Validated with the schema the server uses. */
export function BuildForm({ defaultValues, submitLabel, pendingLabel, onSubmit, secondaryAction }: BuildFormProps) {
  const form = useForm<BuildInput, unknown, BuildOutput>({
    resolver: zodResolver(buildInputSchema),
    defaultValues: defaultValues ?? { title: '', subject: '', parts: [] },
    mode: 'onTouched',
  });
  const { register, control, formState, setError, handleSubmit } = form;
  // keyName: the parts carry their own `id` (kept by the server), so the array's row key needs another name.
  const parts = useFieldArray({ control, name: 'parts', keyName: 'key' });
  const partsHeadingId = useId();
  const errors = formState.errors;

  const submit = handleSubmit(async (values) => {
    try {
      await onSubmit(values);
    } catch (error) {
      const fieldErrors = error instanceof ApiError ? error.details.filter((d) => d.path) : [];
      for (const detail of fieldErrors) setError(detail.path as Path<BuildInput>, { message: detail.message });
      setError('root.server', { message: errorMessage(error) });
    }
  });

  return (
    <form noValidate onSubmit={submit} className="flex flex-col gap-4">
      <Field label="Title" required error={errors.title?.message} hint="What you would call this job, e.g. “Vellum 1100 bottom end, second rebuild”.">
        <Input {...register('title')} autoComplete="off" />
      </Field>
      <Field label="What is being built" error={errors.subject?.message} hint="The engine, gearbox or assembly: make, model, year, anything a reader needs.">
        <Textarea {...register('subject')} rows={2} />
      </Field>

      <fieldset aria-labelledby={partsHeadingId} className="rounded-md border border-rule p-3">
        <legend id={partsHeadingId} className="px-1 text-sm font-medium">
          Parts and serial numbers
        </legend>
        {parts.fields.length === 0 ? (
          <p className="text-sm text-ink-muted">
            No parts listed. Add the parts you will measure (crank, rods, cases…) with the serial stamped or tagged on each.
          </p>
        ) : (
          <ol className="flex flex-col gap-2">
            {parts.fields.map((field, index) => (
              <li key={field.key} className="grid grid-cols-[1fr_minmax(0,12rem)_auto] items-start gap-2">
                <Field label={`Part ${index + 1}`} error={errors.parts?.[index]?.name?.message}>
                  <Input {...register(`parts.${index}.name`)} autoComplete="off" className="h-9 text-sm" />
                </Field>
                <Field
                  label={
                    <>
                      Serial<span className="sr-only"> of part {index + 1}</span>
                    </>
                  }
                  error={errors.parts?.[index]?.serial?.message}
                >
                  <Input {...register(`parts.${index}.serial`)} autoComplete="off" className="figures h-9 text-sm" />
                </Field>
                <Button
                  variant="quiet"
                  size="sm"
                  className="mt-6"
                  onClick={() => parts.remove(index)}
                  aria-label={`Remove part ${index + 1}`}
                >
                  Remove
                </Button>
              </li>
            ))}
          </ol>
        )}
        {errors.parts?.message && <p className="mt-2 text-sm text-danger">{errors.parts.message}</p>}
        <Button
          size="sm"
          className="mt-3"
          onClick={() => parts.append(blankPart, { shouldFocus: true })}
          disabled={parts.fields.length >= MAX_PARTS}
        >
          Add a part
        </Button>
      </fieldset>

      {errors.root?.server && (
        <p role="alert" className="text-sm text-danger">
          Not saved: {errors.root.server.message}
        </p>
      )}
      <div className="flex flex-wrap justify-end gap-2">
        {secondaryAction}
        <Button type="submit" variant="primary" loading={formState.isSubmitting} loadingText={pendingLabel}>
          {submitLabel}
        </Button>
      </div>
    </form>
  );
}
