import type { FieldErrors, Resolver, ResolverResult } from 'react-hook-form';
import { zodResolver } from '@hookform/resolvers/zod';
import type { z } from 'zod';
import {
  instrumentInputSchema,
  instrumentKindQuantity,
  instrumentPatchSchema,
  type Instrument,
  type InstrumentInput,
  type InstrumentKind,
  type InstrumentPatch,
} from '@shared/instruments/instrument.schema';
import { defaultUnitFor, quantityOf } from '@shared/measure/quantities';
import type { ReadingUnit } from '@shared/measure/record-units';
import { noDefaultUnits, type DefaultUnits } from '@/features/auth/lib/default-units';

/** The instrument form as typed: every box is text until the shared schema reads it. */
export interface InstrumentFormValues {
  name: string;
  kind: InstrumentKind;
  serial: string;
  /** What it reads in: a length, or a unit of the quantity its kind measures. */
  unit: ReadingUnit;
  resolution: string;
  statedUncertainty: string;
  /** A calibration certificate's U and its k; the maker's MPE; the setting standard's U and its k. */
  calibrationUncertainty: string;
  calibrationCoverageFactor: string;
  maxPermissibleError: string;
  settingStandardUncertainty: string;
  settingStandardCoverageFactor: string;
  calibrationIntervalDays: string;
  lastCalibratedOn: string;
  calibratedBy: string;
  note: string;
  retired: boolean;
  /** Only when editing: the version the editor started from. */
  lockVersion: number | null;
}

/** A new instrument's form; `blankInstrumentFor` starts it in the builder's units. */
export const blankInstrument: InstrumentFormValues = {
  name: '',
  kind: 'outside-micrometer',
  serial: '',
  unit: 'in',
  resolution: '',
  statedUncertainty: '',
  calibrationUncertainty: '',
  calibrationCoverageFactor: '',
  maxPermissibleError: '',
  settingStandardUncertainty: '',
  settingStandardCoverageFactor: '',
  calibrationIntervalDays: '',
  lastCalibratedOn: '',
  calibratedBy: '',
  note: '',
  retired: false,
  lockVersion: null,
};

/**
 * The unit a new instrument of `kind` starts in: its quantity's unit in the builder's system
 * (`defaultUnitFor`: in or mm, lbf·ft or N·m, psi or kPa, cc either way, their temperature
 * scale), else the imperial one; "Other" starts as a length.
 */
export function newInstrumentUnit(defaults: DefaultUnits, kind: InstrumentKind = blankInstrument.kind): ReadingUnit {
  const quantity = instrumentKindQuantity[kind] ?? 'length';
  // No quantity an instrument reads defaults to the ratio's "1".
  return defaultUnitFor(quantity, defaults.system ?? 'imperial', defaults.temperatureScale ?? undefined) as ReadingUnit;
}

/**
 * The unit to show after the kind changes: the current one while it is of the kind's quantity
 * (any unit for "Other"), else the new quantity's default in the builder's units.
 */
export function unitForKind(kind: InstrumentKind, current: ReadingUnit, defaults: DefaultUnits = noDefaultUnits): ReadingUnit {
  const quantity = instrumentKindQuantity[kind];
  if (quantity === null || quantityOf(current) === quantity) return current;
  return newInstrumentUnit(defaults, kind);
}

/** The empty form for a new instrument, in the builder's default units. */
export function blankInstrumentFor(defaults: DefaultUnits): InstrumentFormValues {
  return { ...blankInstrument, unit: newInstrumentUnit(defaults) };
}

/** The form's starting values for an instrument as stored. */
export function formValuesFrom(instrument: Instrument): InstrumentFormValues {
  return {
    name: instrument.name,
    kind: instrument.kind,
    serial: instrument.serial,
    unit: instrument.unit,
    resolution: instrument.resolution,
    statedUncertainty: instrument.statedUncertainty ?? '',
    calibrationUncertainty: instrument.calibrationUncertainty ?? '',
    calibrationCoverageFactor: instrument.calibrationCoverageFactor === null ? '' : String(instrument.calibrationCoverageFactor),
    maxPermissibleError: instrument.maxPermissibleError ?? '',
    settingStandardUncertainty: instrument.settingStandardUncertainty ?? '',
    settingStandardCoverageFactor: instrument.settingStandardCoverageFactor === null ? '' : String(instrument.settingStandardCoverageFactor),
    calibrationIntervalDays: instrument.calibrationIntervalDays === null ? '' : String(instrument.calibrationIntervalDays),
    lastCalibratedOn: instrument.lastCalibratedOn ?? '',
    calibratedBy: instrument.calibratedBy,
    note: instrument.note,
    retired: instrument.retired,
    lockVersion: instrument.lockVersion,
  };
}

const WHOLE_DAYS = /^\d+$/;

const textOrNull = (text: string) => (text.trim() === '' ? null : text.trim());

/** A k as typed: blank is none; anything else goes as a number (or as typed, so the schema names it). */
function factorOrNull(text: string): number | null {
  const t = text.trim().replace(',', '.');
  if (t === '') return null;
  return (Number.isFinite(Number(t)) ? Number(t) : t) as number;
}

/**
 * Text → the body the API takes. A malformed interval is reported here and left out of the
 * body, because a wrong type would stop the shared schema before its length checks, and the
 * builder should see every problem at once.
 */
function toBody(values: InstrumentFormValues): { body: InstrumentInput; intervalProblem: string | null } {
  const interval = values.calibrationIntervalDays.trim();
  const intervalOk = interval === '' || WHOLE_DAYS.test(interval);
  return {
    body: {
      name: values.name,
      kind: values.kind,
      serial: values.serial,
      unit: values.unit,
      resolution: values.resolution,
      statedUncertainty: values.statedUncertainty.trim() === '' ? null : values.statedUncertainty,
      calibrationUncertainty: textOrNull(values.calibrationUncertainty),
      calibrationCoverageFactor: factorOrNull(values.calibrationCoverageFactor),
      maxPermissibleError: textOrNull(values.maxPermissibleError),
      settingStandardUncertainty: textOrNull(values.settingStandardUncertainty),
      settingStandardCoverageFactor: factorOrNull(values.settingStandardCoverageFactor),
      calibrationIntervalDays: interval === '' || !intervalOk ? null : Number(interval),
      lastCalibratedOn: values.lastCalibratedOn.trim() === '' ? null : values.lastCalibratedOn.trim(),
      calibratedBy: values.calibratedBy,
      note: values.note,
      retired: values.retired,
    },
    intervalProblem: intervalOk ? null : 'enter whole days, e.g. 365, or leave it blank',
  };
}

export type InstrumentFormOutput =
  | { mode: 'create'; body: z.output<typeof instrumentInputSchema> }
  | { mode: 'edit'; patch: InstrumentPatch };

/**
 * Validates with the schema the server uses: `instrumentInputSchema` for a new instrument,
 * `instrumentPatchSchema` (with the starting `lockVersion`) for an edit.
 */
export function instrumentFormResolver(mode: 'create' | 'edit'): Resolver<InstrumentFormValues, unknown, InstrumentFormOutput> {
  const createResolver = zodResolver(instrumentInputSchema);
  const editResolver = zodResolver(instrumentPatchSchema);
  return async (values, context, options): Promise<ResolverResult<InstrumentFormValues, InstrumentFormOutput>> => {
    const { body, intervalProblem } = toBody(values);
    // The zod resolver only reads `names`/`fields` for native validation and criteria; our field names are the schema's.
    const opts = options as never;
    const result =
      mode === 'create'
        ? await createResolver(body, context, opts)
        : await editResolver({ ...body, lockVersion: values.lockVersion ?? 0 }, context, opts);
    const errors = { ...(result.errors as FieldErrors<InstrumentFormValues>) };
    if (intervalProblem) errors.calibrationIntervalDays = { type: 'pattern', message: intervalProblem };
    if (Object.keys(errors).length > 0) return { values: {}, errors };
    return {
      values:
        mode === 'create'
          ? { mode: 'create', body: result.values as z.output<typeof instrumentInputSchema> }
          : { mode: 'edit', patch: result.values as InstrumentPatch },
      errors: {},
    };
  };
}
