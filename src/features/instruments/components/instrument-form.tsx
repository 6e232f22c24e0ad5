import type { ReactNode } from 'react';
import { useController, useForm, useWatch, type Path } from 'react-hook-form';
import { instrumentKindNames, instrumentKindQuantity, instrumentKinds, type InstrumentKind } from '@shared/instruments/instrument.schema';
import { quantityOf, unitTable } from '@shared/measure/quantities';
import { Button } from '@/components/ui/button';
import { Field, Input, Select, Textarea } from '@/components/ui/field';
import { useDefaultUnits } from '@/features/auth/lib/use-default-units';
import { ApiError, errorMessage } from '@/lib/api';
import { instrumentFormResolver, unitForKind, type InstrumentFormOutput, type InstrumentFormValues } from '../lib/instrument-form';
import { figureProblem, resolutionOnlyUncertainty } from '../lib/instrument-format';
import { FigureInput } from './figure-input';
import { UnitOptions } from './unit-options';

export interface InstrumentFormProps {
  mode: 'create' | 'edit';
  defaultValues: InstrumentFormValues;
  submitLabel: string;
  pendingLabel: string;
  /** Resolves when saved; a rejected ApiError's field details are shown beside the fields. */
  onSubmit: (values: InstrumentFormOutput) => Promise<unknown>;
  /** Shown above the buttons when the save was refused as a conflict (edit mode). */
  conflict?: ReactNode;
  secondaryAction?: ReactNode;
}

const formFields: ReadonlySet<string> = new Set([
  'name',
  'kind',
  'serial',
  'unit',
  'resolution',
  'statedUncertainty',
  'calibrationUncertainty',
  'calibrationCoverageFactor',
  'maxPermissibleError',
  'settingStandardUncertainty',
  'settingStandardCoverageFactor',
  'calibrationIntervalDays',
  'lastCalibratedOn',
  'calibratedBy',
  'note',
  'retired',
]);

/** The figures that are in the record's unit, checked again when the unit changes. */
const figureFields = ['resolution', 'statedUncertainty', 'calibrationUncertainty', 'maxPermissibleError', 'settingStandardUncertainty'] as const;

/** Placeholders for a resolution in the units a shop most often records. */
const resolutionPlaceholders: Partial<Record<InstrumentFormValues['unit'], string>> = { in: '0.0001', mm: '0.001' };

/** Name, kind, serial, unit and resolution, stated uncertainty and calibration of one instrument. */
export function InstrumentForm({ mode, defaultValues, submitLabel, pendingLabel, onSubmit, conflict, secondaryAction }: InstrumentFormProps) {
  const form = useForm<InstrumentFormValues, unknown, InstrumentFormOutput>({
    resolver: instrumentFormResolver(mode),
    defaultValues,
    mode: 'onTouched',
  });
  const { register, control, formState, setError, handleSubmit, setValue, getValues, trigger } = form;
  const errors = formState.errors;
  const defaults = useDefaultUnits();
  const kind = useWatch({ control, name: 'kind' });
  // Controlled: its options change with the kind, and the value set for the new kind must land on them.
  const unitField = useController({ control, name: 'unit', rules: { deps: [...figureFields] } }).field;
  const unit = unitField.value;
  const resolution = useWatch({ control, name: 'resolution' });
  const stated = useWatch({ control, name: 'statedUncertainty' });
  const symbol = unitTable[unit].symbol;
  const isLength = quantityOf(unit) === 'length';
  const defaultU = resolutionOnlyUncertainty(resolution, unit);
  const resolutionError = errors.resolution?.message ?? figureProblem(resolution, unit, true);
  const statedError = errors.statedUncertainty?.message ?? figureProblem(stated, unit, false);
  const kindField = register('kind', {
    // The unit follows the kind: a torque wrench reads torque, in the builder's system.
    onChange: (event: { target: { value: string } }) => {
      const next = unitForKind(event.target.value as InstrumentKind, getValues('unit'), defaults);
      if (next === getValues('unit')) return;
      setValue('unit', next, { shouldDirty: true });
      // Re-check what was typed in the old unit only where the builder has been told about it.
      if (formState.isSubmitted) void trigger([...figureFields, 'unit']);
    },
  });

  const submit = handleSubmit(async (values) => {
    try {
      await onSubmit(values);
    } catch (error) {
      const details = error instanceof ApiError ? error.details : [];
      let placed = false;
      for (const detail of details) {
        if (detail.path && formFields.has(detail.path)) {
          setError(detail.path as Path<InstrumentFormValues>, { message: detail.message });
          placed = true;
        }
      }
      if (!(error instanceof ApiError && error.code === 'edit_conflict')) {
        setError('root.server', { message: placed ? `${errorMessage(error)} See the fields marked above.` : errorMessage(error) });
      }
    }
  });

  return (
    <form noValidate onSubmit={submit} className="flex flex-col gap-4">
      <div className="grid gap-3 sm:grid-cols-2">
        <Field label="Name" required error={errors.name?.message} className="sm:col-span-2" hint="What you call it at the bench, e.g. “0–1 in outside micrometer”.">
          <Input {...register('name')} autoComplete="off" />
        </Field>
        <Field label="Kind" error={errors.kind?.message}>
          <Select {...kindField}>
            {instrumentKinds.map((kind) => (
              <option key={kind} value={kind}>
                {instrumentKindNames[kind]}
              </option>
            ))}
          </Select>
        </Field>
        <Field label="Serial" error={errors.serial?.message} hint="As engraved or tagged; blank if it has none.">
          <Input {...register('serial')} autoComplete="off" className="figures" />
        </Field>
      </div>

      <fieldset className="grid gap-3 rounded-md border border-rule p-3 sm:grid-cols-2">
        <legend className="px-1 text-sm font-medium">Scale and uncertainty</legend>
        <Field label="Unit" error={errors.unit?.message} className="sm:col-span-2" hint="The unit the instrument reads in. Its resolution, uncertainty and zero checks are in this unit.">
          <Select
            name={unitField.name}
            ref={unitField.ref}
            value={unit}
            onChange={(event) => unitField.onChange(event.target.value)}
            onBlur={unitField.onBlur}
          >
            <UnitOptions quantity={instrumentKindQuantity[kind]} extra={unit} />
          </Select>
        </Field>
        <Field label={`Resolution (${symbol})`} required error={resolutionError} hint="One step of the scale or the last digit of the display.">
          <FigureInput unit={unit} {...register('resolution')} placeholder={resolutionPlaceholders[unit] ?? ''} />
        </Field>
        <Field
          label={`Stated uncertainty (${symbol})`}
          error={statedError}
          hint="Standard uncertainty from a calibration certificate or the maker. Optional."
        >
          <FigureInput unit={unit} {...register('statedUncertainty')} />
        </Field>
        <p className="text-xs text-ink-muted sm:col-span-2" data-testid="default-uncertainty">
          Without a stated figure the engine uses the resolution alone: u = resolution / (2√3)
          {defaultU ? <span className="figures"> = {defaultU}</span> : null} (GUM F.2.2.1, a reading anywhere within half a step either side).
          {stated.trim() !== '' && ' You have stated one, so it is combined with the resolution (GUM eq. 10).'}
        </p>
      </fieldset>

      <fieldset className="grid gap-3 rounded-md border border-rule p-3 sm:grid-cols-2">
        <legend className="px-1 text-sm font-medium">What it brings to every reading</legend>
        <p className="text-xs text-ink-muted sm:col-span-2">
          Optional. Each is one error shared by every reading taken with this instrument, so it cancels when two of its readings are
          subtracted and adds up when they are summed (GUM 5.2.2). A certificate supersedes the maker&rsquo;s limit.
        </p>
        <Field label={`Calibration U (${symbol})`} error={errors.calibrationUncertainty?.message} hint="Expanded uncertainty from the certificate.">
          <FigureInput unit={unit} {...register('calibrationUncertainty')} />
        </Field>
        <Field label="Certificate's k" error={errors.calibrationCoverageFactor?.message} hint="Usually 2.">
          <Input {...register('calibrationCoverageFactor')} inputMode="decimal" className="figures" />
        </Field>
        <Field label={`Maximum permissible error ± (${symbol})`} error={errors.maxPermissibleError?.message} hint="The maker's limit of error; taken as rectangular (÷ √3).">
          <FigureInput unit={unit} {...register('maxPermissibleError')} />
        </Field>
        <span aria-hidden="true" />
        <Field
          label={`Setting standard U (${symbol})`}
          error={errors.settingStandardUncertainty?.message}
          hint={isLength ? 'The gauge block or setting rod it is zeroed on.' : 'The reference it is zeroed or checked on (a test gauge, a check weight).'}
        >
          <FigureInput unit={unit} {...register('settingStandardUncertainty')} />
        </Field>
        <Field label="Standard's k" error={errors.settingStandardCoverageFactor?.message}>
          <Input {...register('settingStandardCoverageFactor')} inputMode="decimal" className="figures" />
        </Field>
      </fieldset>

      <fieldset className="grid gap-3 rounded-md border border-rule p-3 sm:grid-cols-2">
        <legend className="px-1 text-sm font-medium">Calibration</legend>
        <Field label="Last calibrated on" error={errors.lastCalibratedOn?.message} hint="Blank if there is no record.">
          <Input type="date" {...register('lastCalibratedOn')} className="figures" />
        </Field>
        <Field label="Interval (days)" error={errors.calibrationIntervalDays?.message} hint="How long a calibration holds, e.g. 365.">
          <Input {...register('calibrationIntervalDays')} inputMode="numeric" autoComplete="off" className="figures" />
        </Field>
        <Field label="Calibrated by" error={errors.calibratedBy?.message} className="sm:col-span-2" hint="The lab, or yourself against which standard.">
          <Input {...register('calibratedBy')} autoComplete="off" />
        </Field>
      </fieldset>

      <Field label="Note" error={errors.note?.message}>
        <Textarea {...register('note')} rows={2} />
      </Field>

      {mode === 'edit' && (
        <label className="flex items-start gap-2 text-sm">
          <input type="checkbox" {...register('retired')} className="mt-1 size-4 accent-[var(--color-accent)]" />
          <span>
            <span className="font-medium">Retired</span>
            <span className="block text-ink-muted">Kept with the readings taken with it, but no longer offered for new ones.</span>
          </span>
        </label>
      )}

      {conflict}
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
