import type { ReactNode } from 'react';
import { useForm, useWatch, type FieldErrors, type Path, type Resolver } from 'react-hook-form';
import { zodResolver } from '@hookform/resolvers/zod';
import type { z } from 'zod';
import { zeroCheckInputSchema, type Instrument } from '@shared/instruments/instrument.schema';
import { quantityOf, unitTable, type AnyUnit } from '@shared/measure/quantities';
import { figureTextIn } from '@shared/measure/quantity-text';
import { Button } from '@/components/ui/button';
import { Field, Input, Textarea } from '@/components/ui/field';
import { ApiError, errorMessage } from '@/lib/api';
import { liveOffset, todayLocal } from '../lib/instrument-format';
import { FigureInput } from './figure-input';

interface ZeroCheckFormValues {
  checkedOn: string;
  standardSize: string;
  shown: string;
  note: string;
}

type ZeroCheckOutput = z.output<typeof zeroCheckInputSchema>;

/**
 * A zero check's figure as typed, in the instrument's unit (the server's check): the setting
 * standard cannot be below zero, what the instrument showed may be.
 */
function figureProblem(field: 'standardSize' | 'shown', text: string, unit: AnyUnit): string | undefined {
  if (text.trim() === '') return undefined;
  const parsed = figureTextIn(text, unit);
  if (!parsed.ok) return parsed.message;
  if (field === 'standardSize' && parsed.figure.value.s < 0n && parsed.figure.value.n !== 0n) return 'the setting standard cannot be below zero';
  return undefined;
}

/** The shared schema, plus the unit check the server makes: both figures in the instrument's unit. */
function zeroCheckResolver(unit: AnyUnit): Resolver<ZeroCheckFormValues, unknown, ZeroCheckOutput> {
  const base = zodResolver(zeroCheckInputSchema);
  return async (values, context, options) => {
    const result = await base(values, context, options as never);
    const errors = { ...(result.errors as FieldErrors<ZeroCheckFormValues>) };
    for (const field of ['standardSize', 'shown'] as const) {
      if (errors[field]) continue;
      const problem = figureProblem(field, values[field], unit);
      if (problem) errors[field] = { type: 'unit', message: problem };
    }
    if (Object.keys(errors).length > 0) return { values: {}, errors };
    return { values: result.values as ZeroCheckOutput, errors: {} };
  };
}

const formFields: ReadonlySet<string> = new Set(['checkedOn', 'standardSize', 'shown', 'note']);

export interface ZeroCheckFormProps {
  instrument: Instrument;
  onSubmit: (values: ZeroCheckOutput) => Promise<unknown>;
  secondaryAction?: ReactNode;
}

/** Day, setting standard and what the instrument showed on it; the offset it gives, live. */
export function ZeroCheckForm({ instrument, onSubmit, secondaryAction }: ZeroCheckFormProps) {
  const unit = instrument.unit;
  const symbol = unitTable[unit].symbol;
  const isLength = quantityOf(unit) === 'length';
  const form = useForm<ZeroCheckFormValues, unknown, ZeroCheckOutput>({
    resolver: zeroCheckResolver(unit),
    defaultValues: { checkedOn: todayLocal(), standardSize: '', shown: '', note: '' },
    mode: 'onTouched',
  });
  const { register, control, formState, setError, handleSubmit } = form;
  const errors = formState.errors;
  const [standardSize, shown, checkedOn] = useWatch({ control, name: ['standardSize', 'shown', 'checkedOn'] });
  const offset = liveOffset(standardSize, shown, unit);
  const live = (field: 'standardSize' | 'shown', text: string) => figureProblem(field, text, unit);

  const submit = handleSubmit(async (values) => {
    try {
      await onSubmit(values);
    } catch (error) {
      const details = error instanceof ApiError ? error.details : [];
      for (const detail of details) {
        if (detail.path && formFields.has(detail.path)) setError(detail.path as Path<ZeroCheckFormValues>, { message: detail.message });
      }
      setError('root.server', { message: errorMessage(error) });
    }
  });

  return (
    <form noValidate onSubmit={submit} className="flex flex-col gap-4">
      <Field label="Checked on" required error={errors.checkedOn?.message}>
        <Input type="date" {...register('checkedOn')} className="figures sm:w-48" />
      </Field>
      <div className="grid gap-3 sm:grid-cols-2">
        <Field
          label={`Setting standard (${symbol})`}
          required
          error={errors.standardSize?.message ?? live('standardSize', standardSize)}
          hint={
            isLength
              ? 'Its size: 0 with the faces closed, or the rod, ring or block you set on.'
              : 'What it was checked on: 0 with nothing applied (a gauge open to the air, an empty scale), or a test gauge or check weight.'
          }
        >
          <FigureInput unit={unit} {...register('standardSize')} />
        </Field>
        <Field
          label={`It showed (${symbol})`}
          required
          error={errors.shown?.message ?? live('shown', shown)}
          hint="What the instrument read on the standard, as shown."
        >
          <FigureInput unit={unit} {...register('shown')} />
        </Field>
      </div>
      <p className="rounded-md border border-rule bg-paper-2/60 px-3 py-2 text-sm" aria-live="polite" data-testid="zero-offset">
        {offset.ok ? (
          <>
            Offset: shown − standard = <strong className="figures font-semibold whitespace-nowrap">{offset.text}</strong>, subtracted from this
            day’s readings with this instrument
            {checkedOn && (
              <>
                {' '}
                (<span className="figures whitespace-nowrap">{checkedOn}</span>)
              </>
            )}
            .
          </>
        ) : (
          <span className="text-ink-muted">Enter the standard and what the instrument showed to see the offset (shown − standard).</span>
        )}
      </p>
      <Field label="Note" error={errors.note?.message} hint="Optional: which standard, the temperature, anything a reviewer should know.">
        <Textarea {...register('note')} rows={2} />
      </Field>
      {errors.root?.server && (
        <p role="alert" className="text-sm text-danger">
          Not logged: {errors.root.server.message}
        </p>
      )}
      <div className="flex flex-wrap justify-end gap-2">
        {secondaryAction}
        <Button type="submit" variant="primary" loading={formState.isSubmitting} loadingText="Logging…">
          Log zero check
        </Button>
      </div>
    </form>
  );
}
