import { ForeignKeyConstraintError, Op, literal } from 'sequelize';
import {
  calibrationDueOn,
  calibrationStateOn,
  kindUnitProblem,
  zeroCheckedKinds,
  type Instrument as InstrumentDto,
  type InstrumentPatch,
  type ZeroCheck as ZeroCheckDto,
  type instrumentInputSchema,
  type zeroCheckInputSchema,
} from '@shared/instruments/instrument.schema';
import { nonNegativeQuantities, type ReadingUnit } from '@shared/measure/record-units';
import { quantityOf } from '@shared/measure/quantities';
import { figureTextIn } from '@shared/measure/quantity-text';
import { fractionOfDecimal, fractionToFixed, type Fraction } from '@shared/measure/exact';
import type { z } from 'zod';
import { badRequest, conflict, forbidden, notFound, unauthorized } from '../../http/errors';
import { updateWithLock } from '../../http/optimistic-lock';
import { Build } from '../builds/build.model';
import { Clip, Moment } from '../clips/clip.model';
import { Reading } from '../readings/reading.model';
import type { User } from '../users/user.model';
import { Instrument, ZeroCheck } from './instrument.model';

/** Roles that may look at any builder's register (to check readings taken with it). */
const reviewers = new Set(['moderator', 'admin']);

/** Today's date in UTC, YYYY-MM-DD: calibration states are judged on it. */
function todayUtc(): string {
  return new Date().toISOString().slice(0, 10);
}

/**
 * Loads an instrument the user may see: its owner, moderators and admins. Unknown and
 * not-yours both answer 404, so other builders' ids are not confirmed.
 */
export async function instrumentForViewer(instrumentId: number, user: User | undefined): Promise<Instrument> {
  if (!user) throw unauthorized();
  const instrument = await Instrument.findByPk(instrumentId);
  if (!instrument || (instrument.ownerId !== user.id && !reviewers.has(user.role))) {
    throw notFound('There is no instrument with that id.');
  }
  return instrument;
}

/**
 * Loads an instrument the user may change: only the builder who keeps it. A reviewer who may
 * see it gets 403 (as for builds); anyone else 404.
 */
export async function instrumentForOwner(instrumentId: number, user: User | undefined): Promise<Instrument> {
  const instrument = await instrumentForViewer(instrumentId, user);
  if (instrument.ownerId !== user!.id) throw forbidden('Only the builder who keeps this instrument can change it.');
  return instrument;
}

/** Exact difference of two decimal texts in `unit`, at the finer of their two places. */
function exactDifference(minuend: string, subtrahend: string, unit: ReadingUnit): string {
  const a = figureTextIn(minuend, unit);
  const b = figureTextIn(subtrahend, unit);
  if (!a.ok || !b.ok) throw new Error(`stored zero check figures are not figures in ${unit}: ${minuend}, ${subtrahend}`);
  // Both texts are exact at the finer place, so the difference is too: no rounding happens.
  const places = Math.max(a.figure.decimal.scale, b.figure.decimal.scale);
  const difference: Fraction = fractionOfDecimal(a.figure.decimal).sub(fractionOfDecimal(b.figure.decimal));
  return fractionToFixed(difference, places, { minus: '-' });
}

/** shown − standardSize, exact decimal text in the check's unit ("0.0002", "-0.0001", "0.0000"). */
export function zeroCheckOffset(z: ZeroCheck): string {
  return exactDifference(z.shown, z.standardSize, z.unit);
}

export function toZeroCheckDto(z: ZeroCheck): ZeroCheckDto {
  return {
    id: z.id,
    instrumentId: z.instrumentId,
    checkedOn: z.checkedOn,
    unit: z.unit,
    standardSize: z.standardSize,
    shown: z.shown,
    offset: zeroCheckOffset(z),
    momentId: z.momentId ?? null,
    note: z.note,
    createdBy: z.createdBy,
    createdAt: z.createdAt.toISOString(),
  };
}

export function toInstrumentDto(instrument: Instrument, latestZeroCheck?: ZeroCheck | null): InstrumentDto {
  const calibration = { lastCalibratedOn: instrument.lastCalibratedOn ?? null, calibrationIntervalDays: instrument.calibrationIntervalDays ?? null };
  return {
    id: instrument.id,
    ownerId: instrument.ownerId,
    name: instrument.name,
    kind: instrument.kind,
    serial: instrument.serial,
    unit: instrument.unit,
    resolution: instrument.resolution,
    statedUncertainty: instrument.statedUncertainty ?? null,
    calibrationUncertainty: instrument.calibrationUncertainty ?? null,
    calibrationCoverageFactor: instrument.calibrationCoverageFactor == null ? null : Number(instrument.calibrationCoverageFactor),
    maxPermissibleError: instrument.maxPermissibleError ?? null,
    settingStandardUncertainty: instrument.settingStandardUncertainty ?? null,
    settingStandardCoverageFactor: instrument.settingStandardCoverageFactor == null ? null : Number(instrument.settingStandardCoverageFactor),
    calibrationIntervalDays: calibration.calibrationIntervalDays,
    lastCalibratedOn: calibration.lastCalibratedOn,
    calibrationDueOn: calibrationDueOn(calibration.lastCalibratedOn, calibration.calibrationIntervalDays),
    calibrationState: calibrationStateOn(calibration, todayUtc()),
    calibratedBy: instrument.calibratedBy,
    note: instrument.note,
    retired: instrument.retired,
    needsZeroCheck: zeroCheckedKinds.has(instrument.kind),
    latestZeroCheck: latestZeroCheck ? toZeroCheckDto(latestZeroCheck) : null,
    lockVersion: instrument.lockVersion,
    createdAt: instrument.createdAt.toISOString(),
    updatedAt: instrument.updatedAt.toISOString(),
  };
}

/** The newest zero check (by day, then by entry) of each instrument, in one query. */
async function latestZeroChecks(instrumentIds: number[]): Promise<Map<number, ZeroCheck>> {
  const ids = instrumentIds.filter((id) => Number.isSafeInteger(id));
  if (ids.length === 0) return new Map();
  const rows = await ZeroCheck.findAll({
    where: {
      id: {
        [Op.in]: literal(
          `(SELECT DISTINCT ON (instrument_id) id FROM zero_checks WHERE instrument_id IN (${ids.join(',')}) ORDER BY instrument_id, checked_on DESC, id DESC)`,
        ),
      },
    },
  });
  return new Map(rows.map((z) => [z.instrumentId, z]));
}

/** The latest zero check of an instrument on a calendar day (YYYY-MM-DD), or null. */
export async function zeroCheckOn(instrumentId: number, day: string): Promise<ZeroCheck | null> {
  return ZeroCheck.findOne({ where: { instrumentId, checkedOn: day }, order: [['id', 'DESC']] });
}

async function oneDto(instrument: Instrument): Promise<InstrumentDto> {
  return toInstrumentDto(instrument, (await latestZeroChecks([instrument.id])).get(instrument.id) ?? null);
}

export async function getInstrument(instrument: Instrument): Promise<InstrumentDto> {
  return oneDto(instrument);
}

/** The caller's own register, by keyset on id ascending. */
export async function listInstruments(owner: User, q: { after?: number; limit: number }) {
  const rows = await Instrument.findAll({
    where: { ownerId: owner.id, ...(q.after ? { id: { [Op.gt]: q.after } } : {}) },
    order: [['id', 'ASC']],
    limit: q.limit + 1,
  });
  const page = rows.slice(0, q.limit);
  const latest = await latestZeroChecks(page.map((i) => i.id));
  return {
    items: page.map((i) => toInstrumentDto(i, latest.get(i.id) ?? null)),
    nextAfter: rows.length > q.limit ? page[page.length - 1]!.id : null,
  };
}

/** A figure as stored: decimal text in `unit`, or a 400 naming the field. */
/** The register's and the zero check's fields as their forms name them. */
const figureWords: Readonly<Record<string, string>> = {
  resolution: 'the resolution',
  statedUncertainty: 'the stated uncertainty',
  calibrationUncertainty: 'the calibration’s U',
  maxPermissibleError: 'the maximum permissible error',
  settingStandardUncertainty: 'the setting standard’s U',
  standardSize: 'the setting standard',
  shown: 'what it showed',
};

function storedFigure(field: string, text: string, unit: ReadingUnit, rule: 'positive' | 'not-negative' | 'any'): string {
  const parsed = figureTextIn(text, unit);
  if (!parsed.ok) throw badRequest(`${field}: ${parsed.message}`, [{ path: field, message: parsed.message }]);
  const sign = parsed.figure.value.n === 0n ? 0 : Number(parsed.figure.value.s);
  const words = figureWords[field] ?? field;
  if (rule === 'positive' && sign <= 0) {
    throw badRequest(`${field}: ${words} must be greater than 0.`, [{ path: field, message: `${words} must be greater than 0` }]);
  }
  if (rule === 'not-negative' && sign < 0) {
    throw badRequest(`${field}: ${words} cannot be below zero.`, [{ path: field, message: `${words} cannot be below zero` }]);
  }
  return parsed.text;
}

type InstrumentInput = z.output<typeof instrumentInputSchema>;

export async function createInstrument(owner: User, input: InstrumentInput): Promise<InstrumentDto> {
  const instrument = await Instrument.create({
    ownerId: owner.id,
    name: input.name,
    kind: input.kind,
    serial: input.serial,
    unit: input.unit,
    resolution: storedFigure('resolution', input.resolution, input.unit, 'positive'),
    statedUncertainty: input.statedUncertainty === null ? null : storedFigure('statedUncertainty', input.statedUncertainty, input.unit, 'not-negative'),
    ...accuracyFields(input, input.unit),
    calibrationIntervalDays: input.calibrationIntervalDays,
    lastCalibratedOn: input.lastCalibratedOn,
    calibratedBy: input.calibratedBy,
    note: input.note,
    retired: input.retired,
  });
  return toInstrumentDto(instrument, null);
}

/**
 * Saves the fields sent, if nobody saved since `lockVersion`. Lengths are read in the unit the
 * instrument will have; changing the unit of an instrument with a stated uncertainty needs the
 * uncertainty sent again, so a figure is never reinterpreted in another unit.
 */
export async function updateInstrument(instrument: Instrument, patch: InstrumentPatch): Promise<InstrumentDto> {
  const { lockVersion, ...fields } = patch;
  const unit = fields.unit ?? instrument.unit;
  const kindProblem = kindUnitProblem(fields.kind ?? instrument.kind, unit);
  if (kindProblem) throw badRequest(`unit: ${kindProblem}`, [{ path: fields.unit !== undefined ? 'unit' : 'kind', message: kindProblem }]);
  if (quantityOf(unit) !== quantityOf(instrument.unit) && (await instrumentHasRecords(instrument.id))) {
    throw conflict(
      `This instrument has readings or zero checks in ${quantityOf(instrument.unit)}; it cannot start reading ${quantityOf(unit)}. Add a new instrument instead.`,
      'instrument_in_use',
    );
  }
  const changes: Record<string, unknown> = {};
  for (const key of ['name', 'kind', 'serial', 'unit', 'calibrationIntervalDays', 'lastCalibratedOn', 'calibratedBy', 'note', 'retired'] as const) {
    if (fields[key] !== undefined) changes[key] = fields[key];
  }
  if (fields.resolution !== undefined) changes.resolution = storedFigure('resolution', fields.resolution, unit, 'positive');
  if (fields.statedUncertainty !== undefined) {
    changes.statedUncertainty = fields.statedUncertainty === null ? null : storedFigure('statedUncertainty', fields.statedUncertainty, unit, 'not-negative');
  } else if (unit !== instrument.unit && instrument.statedUncertainty != null) {
    throw badRequest('Send the stated uncertainty in the new unit (or null) when you change the unit.', [
      { path: 'statedUncertainty', message: 'send it in the new unit' },
    ]);
  }
  Object.assign(changes, accuracyFields(fields, unit));
  for (const field of ['calibrationUncertainty', 'maxPermissibleError', 'settingStandardUncertainty'] as const) {
    if (fields[field] === undefined && unit !== instrument.unit && instrument[field] != null) {
      throw badRequest('Send the calibration, maximum permissible error and setting standard in the new unit (or null) when you change the unit.', [
        { path: field, message: 'send it in the new unit' },
      ]);
    }
  }
  await updateWithLock(Instrument, instrument, lockVersion, changes, { what: 'instrument' });
  await instrument.reload();
  return oneDto(instrument);
}

/** The register's accuracy fields that were sent, as stored (lengths exact in the instrument's unit). */
function accuracyFields(
  fields: {
    calibrationUncertainty?: string | null;
    calibrationCoverageFactor?: number | null;
    maxPermissibleError?: string | null;
    settingStandardUncertainty?: string | null;
    settingStandardCoverageFactor?: number | null;
  },
  unit: ReadingUnit,
): Record<string, string | null> {
  const out: Record<string, string | null> = {};
  for (const field of ['calibrationUncertainty', 'maxPermissibleError', 'settingStandardUncertainty'] as const) {
    const text = fields[field];
    if (text !== undefined) out[field] = text === null ? null : storedFigure(field, text, unit, 'not-negative');
  }
  for (const field of ['calibrationCoverageFactor', 'settingStandardCoverageFactor'] as const) {
    const k = fields[field];
    if (k !== undefined) out[field] = k === null ? null : String(k);
  }
  return out;
}

/** True when readings or zero checks were logged with the instrument. */
async function instrumentHasRecords(instrumentId: number): Promise<boolean> {
  const [readings, checks] = await Promise.all([Reading.count({ where: { instrumentId } }), ZeroCheck.count({ where: { instrumentId } })]);
  return readings > 0 || checks > 0;
}

function inUse() {
  return conflict(
    'This instrument has readings or zero checks logged with it, so it stays in the register. Retire it instead (PATCH retired=true): it then drops out of the pickers and its records keep their evidence.',
    'instrument_in_use',
  );
}

/** Deletes an instrument nothing refers to; one with readings or zero checks is refused (409). */
export async function deleteInstrument(instrument: Instrument): Promise<void> {
  if (await instrumentHasRecords(instrument.id)) throw inUse();
  // A reading logged between the count and the delete is caught by the foreign key.
  await instrument.destroy().catch((err: unknown) => {
    throw err instanceof ForeignKeyConstraintError ? inUse() : err;
  });
}

/** Zero checks of an instrument, newest first (by day, then entry), by keyset on the last id shown. */
export async function listZeroChecks(instrument: Instrument, q: { before?: number; limit: number }) {
  let where: Record<string | symbol, unknown> = { instrumentId: instrument.id };
  if (q.before) {
    const last = await ZeroCheck.findOne({ where: { id: q.before, instrumentId: instrument.id } });
    if (!last) throw badRequest('That page marker is not a zero check of this instrument.', [{ path: 'before', message: 'not a zero check of this instrument' }]);
    where = {
      ...where,
      [Op.or]: [{ checkedOn: { [Op.lt]: last.checkedOn } }, { checkedOn: last.checkedOn, id: { [Op.lt]: last.id } }],
    };
  }
  const rows = await ZeroCheck.findAll({ where, order: [['checkedOn', 'DESC'], ['id', 'DESC']], limit: q.limit + 1 });
  const page = rows.slice(0, q.limit);
  return { items: page.map(toZeroCheckDto), nextBefore: rows.length > q.limit ? page[page.length - 1]!.id : null };
}

type ZeroCheckInput = z.output<typeof zeroCheckInputSchema>;

/**
 * Logs a zero check. Its figures are in the instrument's unit (a setting standard is read in the
 * unit the instrument shows: a gauge block, a known pressure, an ice bath); a moment, when given,
 * must be on a clip of one of the caller's builds. A standard below zero is refused only for the
 * quantities that cannot be (a length, a volume, a time, a mass).
 */
export async function addZeroCheck(instrument: Instrument, user: User, input: ZeroCheckInput): Promise<ZeroCheckDto> {
  const signed = !nonNegativeQuantities.has(quantityOf(instrument.unit));
  const standardSize = storedFigure('standardSize', input.standardSize, instrument.unit, signed ? 'any' : 'not-negative');
  const shown = storedFigure('shown', input.shown, instrument.unit, 'any');
  if (input.momentId !== null) {
    const moment = await Moment.findOne({
      where: { id: input.momentId },
      include: [{ model: Clip, as: 'clip', required: true, include: [{ model: Build, as: 'build', required: true, where: { ownerId: user.id } }] }],
    });
    if (!moment) {
      throw badRequest('There is no moment with that id on a clip of your builds.', [{ path: 'momentId', message: 'not a moment on a clip of your builds' }]);
    }
  }
  const z = await ZeroCheck.create({
    instrumentId: instrument.id,
    checkedOn: input.checkedOn,
    unit: instrument.unit,
    standardSize,
    shown,
    momentId: input.momentId,
    note: input.note,
    createdBy: user.id,
  });
  return toZeroCheckDto(z);
}
