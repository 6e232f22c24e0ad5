import type { ReactNode } from 'react';
import { FormProvider, useForm, type FieldValues, type Path, type UseFormSetError } from 'react-hook-form';
import type { z } from 'zod';
import type { specInputSchema, specVersionInputSchema } from '@shared/specs/spec-library.schema';
import { Button } from '@/components/ui/button';
import { Field, Input } from '@/components/ui/field';
import { ApiError, errorMessage } from '@/lib/api';
import { specCreateResolver, specFormPaths, specVersionResolver, type SpecCreateValues, type SpecFiguresValues } from '../lib/spec-form';
import { SpecFiguresFields } from './spec-figures-fields';

/** Puts the server's field errors beside their fields and the rest at the foot of the form. */
export function placeServerErrors<T extends FieldValues>(error: unknown, setError: UseFormSetError<T>, skip?: (e: ApiError) => boolean) {
  const details = error instanceof ApiError ? error.details : [];
  let placed = false;
  for (const detail of details) {
    if (detail.path && specFormPaths.has(detail.path)) {
      setError(detail.path as Path<T>, { message: detail.message });
      placed = true;
    }
  }
  if (error instanceof ApiError && skip?.(error)) return;
  setError('root.server' as Path<T>, { message: placed ? `${errorMessage(error)} See the fields marked above.` : errorMessage(error) });
}

function Footer({ pending, label, pendingLabel, secondaryAction, rootError }: { pending: boolean; label: string; pendingLabel: string; secondaryAction?: ReactNode; rootError?: string }) {
  return (
    <>
      {rootError && (
        <p role="alert" className="text-sm text-danger">
          Not saved: {rootError}
        </p>
      )}
      <div className="flex flex-wrap justify-end gap-2">
        {secondaryAction}
        <Button type="submit" variant="primary" loading={pending} loadingText={pendingLabel}>
          {label}
        </Button>
      </div>
    </>
  );
}

/** A new spec: name, what it applies to, sharing, and the figures of version 1 (`specInputSchema`). */
export function SpecCreateForm({
  defaultValues,
  onSubmit,
  secondaryAction,
}: {
  defaultValues: SpecCreateValues;
  onSubmit: (values: z.output<typeof specInputSchema>) => Promise<unknown>;
  secondaryAction?: ReactNode;
}) {
  const form = useForm<SpecCreateValues, unknown, z.output<typeof specInputSchema>>({ resolver: specCreateResolver(), defaultValues, mode: 'onTouched' });
  const { register, formState, handleSubmit, setError } = form;
  const errors = formState.errors;
  const submit = handleSubmit(async (values) => {
    try {
      await onSubmit(values);
    } catch (error) {
      placeServerErrors(error, setError);
    }
  });
  return (
    <FormProvider {...form}>
      <form noValidate onSubmit={submit} className="flex flex-col gap-4">
        <Field label="Name" required error={errors.name?.message} hint="What it is, e.g. “Oil pump rotor end float”.">
          <Input {...register('name')} autoComplete="off" />
        </Field>
        <Field label="Applies to" error={errors.appliesTo?.message} hint="The engine or part family, e.g. “Vellum 1100, all years”.">
          <Input {...register('appliesTo')} autoComplete="off" />
        </Field>
        <label className="flex items-start gap-2 text-sm">
          <input type="checkbox" {...register('shared')} className="mt-1 size-4 accent-[var(--color-accent)]" />
          <span>
            <span className="font-medium">Share it in the library</span>
            <span className="block text-ink-muted">Other builders can find it and judge their clearances against it. Your name goes with it.</span>
          </span>
        </label>
        <SpecFiguresFields />
        <Footer pending={formState.isSubmitting} label="Create spec" pendingLabel="Creating…" secondaryAction={secondaryAction} rootError={errors.root?.server?.message} />
      </form>
    </FormProvider>
  );
}

/** The next version's figures, prefilled from the latest (`specVersionInputSchema`). */
export function SpecVersionForm({
  defaultValues,
  nextNumber,
  onSubmit,
  secondaryAction,
}: {
  defaultValues: SpecFiguresValues;
  nextNumber: number;
  onSubmit: (values: z.output<typeof specVersionInputSchema>) => Promise<unknown>;
  secondaryAction?: ReactNode;
}) {
  const form = useForm<SpecFiguresValues, unknown, z.output<typeof specVersionInputSchema>>({ resolver: specVersionResolver(), defaultValues, mode: 'onTouched' });
  const { formState, handleSubmit, setError } = form;
  const submit = handleSubmit(async (values) => {
    try {
      await onSubmit(values);
    } catch (error) {
      placeServerErrors(error, setError);
    }
  });
  return (
    <FormProvider {...form}>
      <form noValidate onSubmit={submit} className="flex flex-col gap-4">
        <SpecFiguresFields />
        <Footer
          pending={formState.isSubmitting}
          label={`Save as version ${nextNumber}`}
          pendingLabel="Saving…"
          secondaryAction={secondaryAction}
          rootError={formState.errors.root?.server?.message}
        />
      </form>
    </FormProvider>
  );
}
