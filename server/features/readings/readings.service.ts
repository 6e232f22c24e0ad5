import { ForeignKeyConstraintError, Op, type ModelStatic, type Transaction } from 'sequelize';
import type { z } from 'zod';
import { calibrationDueOn, calibrationStateOn, zeroCheckedKinds } from '@shared/instruments/instrument.schema';
import type { Reading as EngineReading } from '@shared/measure/calc.schema';
import { decimalsForStep, formatValue } from '@shared/measure/format-quantity';
import { evaluateReading } from '@shared/measure/readings';
import { picometresToMicrometres, type LengthUnit } from '@shared/measure/units';
import { quantityOf } from '@shared/measure/quantities';
import { engineInstrumentsMap } from '@shared/measure/instrument-map';
import { engineReadingProblems, normaliseReadingFigures, toEngineReading, type ReadingFigures, type RegisterInstrument } from '@shared/readings/reading-figures';
import {
  keyFromName,
  MAX_KEY_LENGTH,
  uniqueKey,
  type Reading as ReadingDto,
  type ReadingKind,
  type ReadingWarning,
  type readingHistoryResponseSchema,
  type readingInputSchema,
  type readingListQuerySchema,
  type ReadingPatch,
} from '@shared/readings/reading.schema';
import { AppError, badRequest, conflict, notFound } from '../../http/errors';
import { editConflict, updateWithLock } from '../../http/optimistic-lock';
import { Build, Part } from '../builds/build.model';
import { buildForOwner, buildForViewer, type OwnerAction } from '../builds/builds.service';
import { ClearanceTerm, Clearance } from '../clearances/clearance.model';
import { Clip, Moment } from '../clips/clip.model';
import { Instrument, ZeroCheck } from '../instruments/instrument.model';
import { toInstrumentDto, zeroCheckOffset } from '../instruments/instruments.service';
import { Story } from '../stories/story.model';
import { User } from '../users/user.model';
import { Reading, ReadingRevision } from './reading.model';

export type { ReadingDto };
type ReadingInput = z.output<typeof readingInputSchema>;
type ReadingListQuery = z.output<typeof readingListQuerySchema>;
type ReadingHistory = z.infer<typeof readingHistoryResponseSchema>;

/** Today in UTC, YYYY-MM-DD: the default day a reading was taken. */
function todayUtc(): string {
  return new Date().toISOString().slice(0, 10);
}

/** Escapes LIKE's wildcards (keys may hold `_`), so a key matches only itself. */
export function escapeLike(text: string): string {
  return text.replace(/[\\%_]/g, (c) => `\\${c}`);
}

/**
 * The field-named 400 every figure refusal uses, in the same body as a schema refusal. The
 * messages say what is wrong in the form's words, so the first one is the sentence on top.
 */
function invalid(problems: { path: string; message: string }[]): AppError {
  const first = problems[0];
  if (!first) return badRequest('Some fields are not right.', problems, 'invalid_request');
  const sentence = `${first.message.charAt(0).toUpperCase()}${first.message.slice(1)}`.replace(/[.]?$/, '.');
  const more = problems.length > 1 ? ` ${problems.length - 1} more ${problems.length === 2 ? 'problem is' : 'problems are'} shown beside ${problems.length === 2 ? 'its field' : 'their fields'}.` : '';
  return badRequest(`${sentence}${more}`, problems, 'invalid_request');
}

/**
 * A key that is free in the build: the one sent (409 `key_taken` when another row has it), or
 * one derived from the name with -2, -3… appended until free. Call inside a transaction that
 * holds the build row locked, so two saves cannot pick the same key.
 */
export async function allocateKey(
  model: ModelStatic<Reading> | ModelStatic<Clearance>,
  buildId: number,
  wanted: { key?: string; name: string },
  transaction: Transaction,
  what: 'reading' | 'clearance',
): Promise<string> {
  const finder = model as unknown as ModelStatic<Reading>;
  /** `base`, or the first of `base-2`, `base-3`… that no row of the build has. */
  const freeFrom = async (base: string) => {
    const rows = await finder.findAll({
      attributes: ['key'],
      where: { buildId, key: { [Op.like]: `${escapeLike(base.slice(0, MAX_KEY_LENGTH - 4).replace(/-+$/, ''))}%` } },
      transaction,
    });
    return uniqueKey(base, rows.map((r) => r.key));
  };
  if (wanted.key !== undefined) {
    const taken = await finder.count({ where: { buildId, key: wanted.key }, transaction });
    if (taken) throw keyTaken(wanted.key, await freeFrom(wanted.key), what);
    return wanted.key;
  }
  return freeFrom(keyFromName(wanted.name));
}

/** 409 `key_taken`, offering the first free key after the one asked for. */
function keyTaken(key: string, free: string, what: 'reading' | 'clearance'): AppError {
  return new AppError(409, 'key_taken', `Another ${what} of this build already has the key "${key}". Use "${free}", or type another key.`, [
    { path: 'key', message: `another ${what} of this build has the key "${key}": use "${free}", or type another key` },
  ]);
}

/** The stories of a build whose body cites `(kind:key)`. */
export async function storiesCiting(buildId: number, kind: 'reading' | 'clearance', key: string, transaction?: Transaction) {
  return Story.findAll({
    attributes: ['id', 'title'],
    where: { buildId, body: { [Op.like]: `%(${kind}:${escapeLike(key)})%` } },
    order: [['id', 'ASC']],
    transaction,
  });
}

function citedRefusal(kind: 'reading' | 'clearance', key: string, stories: Story[], doing: string): AppError {
  const titles = stories.map((s) => `"${s.title}"`).join(', ');
  return new AppError(
    409,
    `${kind}_cited`,
    `${stories.length === 1 ? 'The story' : 'The stories'} ${titles} cite${stories.length === 1 ? 's' : ''} this ${kind} as (${kind}:${key}). Take the claim out of the story first, then ${doing}.`,
    stories.map((s) => ({ path: 'key', message: `cited by story ${s.id}` })),
  );
}

interface Context {
  moments: Map<number, Moment & { clip?: Clip }>;
  instruments: Map<number, Instrument>;
  parts: Map<number, Part>;
  users: Map<number, User>;
  zeroChecks: Map<string, ZeroCheck>;
}

const zeroKey = (instrumentId: number, day: string) => `${instrumentId}|${day}`;

/** Figures as stored → the shape the shared code takes. */
function storedFigures(r: Pick<Reading, 'unit' | 'value' | 'passes' | 'stops' | 'repeatedValues' | 'entered'>): ReadingFigures {
  return { unit: r.unit, value: r.value, passes: r.passes, stops: r.stops, values: r.repeatedValues ? r.repeatedValues.map(String) : null, entered: r.entered };
}

function calibrationWarning(instrument: Instrument, takenOn: string): ReadingWarning | null {
  const record = { lastCalibratedOn: instrument.lastCalibratedOn ?? null, calibrationIntervalDays: instrument.calibrationIntervalDays ?? null };
  const state = calibrationStateOn(record, takenOn);
  if (state === 'overdue') {
    return {
      code: 'calibration-overdue',
      message: `${instrument.name} was due for calibration on ${calibrationDueOn(record.lastCalibratedOn, record.calibrationIntervalDays)}; this reading was taken on ${takenOn}, after that.`,
    };
  }
  if (state === 'no-record') {
    return { code: 'no-calibration-record', message: `There is no calibration on record for ${instrument.name} (a date and an interval).` };
  }
  return null;
}

/**
 * The engine's reading, its result and the warnings, for stored figures. The figures were
 * checked when saved; should the instrument have changed since so that its figures no longer
 * fit the engine, the reading is worked out from its own figures and the working says so.
 */
export function evaluateStored(
  r: Pick<Reading, 'key' | 'kind' | 'unit' | 'value' | 'passes' | 'stops' | 'repeatedValues' | 'entered' | 'temperatureC' | 'material' | 'takenOn'>,
  instrument: Instrument,
  zero: ZeroCheck | null,
) {
  const applied = r.kind === 'bracket' ? null : zero;
  const zeroOffset = applied ? { id: applied.id, offset: zeroCheckOffset(applied), unit: applied.unit } : null;
  const built = toEngineReading(
    { ...storedFigures(r), kind: r.kind, temperatureC: r.temperatureC === null ? null : Number(r.temperatureC), material: r.material },
    registerOf(instrument),
    zeroOffset,
  );
  const warnings: ReadingWarning[] = [];
  const calibration = calibrationWarning(instrument, r.takenOn);
  if (calibration) warnings.push(calibration);
  if (zeroCheckedKinds.has(instrument.kind) && r.kind !== 'bracket' && !zero) {
    warnings.push({
      code: 'no-zero-check',
      message: `No zero check of ${instrument.name} is recorded on ${r.takenOn}, so no zero offset was applied.`,
    });
  }
  warnings.push(...built.warnings);

  let engine: EngineReading = built.engine;
  let engineInstrument = built.instrument;
  const problems = engineReadingProblems(engine);
  const preface: string[] = [];
  if (problems.length) {
    engine = bareEngine(r);
    engineInstrument = null;
    preface.push(`${r.key}: the instrument's figures could not be used (${problems.map((p) => p.message).join('; ')}); worked out from the reading's own figures.`);
  }
  let evaluated;
  try {
    evaluated = evaluateReading(r.key, engine, engineInstrumentsMap([engineInstrument]));
  } catch {
    // An instrument entry the engine cannot use (a unit of another quantity): the reading's own figures.
    engine = bareEngine(r);
    engineInstrument = null;
    preface.push(`${r.key}: the instrument's accuracy figures could not be used; worked out from the reading's own figures.`);
    evaluated = evaluateReading(r.key, engine);
  }
  return {
    engine,
    engineInstrument,
    warnings,
    zeroCheck: zeroOffset,
    result: {
      quantity: evaluated.quantity,
      valueUm: evaluated.valuePm === null ? null : picometresToMicrometres(evaluated.valuePm),
      standardUncertaintyUm: evaluated.valuePm === null ? null : (evaluated.standardUncertaintyUm ?? 0),
      value: evaluated.estimate.valueOf(),
      standardUncertainty: evaluated.standardUncertainty,
      display: formatValue(evaluated.estimate, evaluated.unit, decimalsForStep(evaluated.displayStep)),
      steps: [...preface, ...evaluated.steps],
    },
  };
}

/** What the register holds of an instrument, for the engine: its API shape carries every figure. */
function registerOf(instrument: Instrument): RegisterInstrument {
  return toInstrumentDto(instrument);
}

function bareEngine(r: Pick<Reading, 'kind' | 'unit' | 'value' | 'passes' | 'stops' | 'repeatedValues'>): EngineReading {
  if (r.kind === 'direct') return { kind: 'direct', value: String(r.value), unit: r.unit };
  if (r.kind === 'bracket') return { kind: 'bracket', passes: String(r.passes), stops: String(r.stops), unit: r.unit as LengthUnit };
  return { kind: 'repeated', values: (r.repeatedValues ?? []).map(String), unit: r.unit };
}

/** Everything a page of readings needs, in a fixed number of queries whatever its length. */
async function loadContext(rows: Reading[], transaction?: Transaction): Promise<Context> {
  const ids = <T>(pick: (r: Reading) => T | null | undefined) => [...new Set(rows.map(pick).filter((x): x is T => x !== null && x !== undefined))];
  const preloaded = rows.filter((r) => r.moment && (r.moment as Moment & { clip?: Clip }).clip);
  const moments = new Map<number, Moment & { clip?: Clip }>(preloaded.map((r) => [r.momentId, r.moment as Moment & { clip?: Clip }]));
  const missingMoments = ids((r) => r.momentId).filter((id) => !moments.has(id));
  const instrumentIds = ids((r) => r.instrumentId);
  const partIds = ids((r) => r.partId);
  const userIds = ids((r) => r.createdBy);
  const days = ids((r) => r.takenOn);
  const [momentRows, instruments, parts, users, zeroChecks] = await Promise.all([
    missingMoments.length ? Moment.findAll({ where: { id: missingMoments }, include: [{ model: Clip, as: 'clip' }], transaction }) : [],
    instrumentIds.length ? Instrument.findAll({ where: { id: instrumentIds }, transaction }) : [],
    partIds.length ? Part.findAll({ where: { id: partIds }, transaction }) : [],
    userIds.length ? User.findAll({ where: { id: userIds }, transaction }) : [],
    instrumentIds.length ? ZeroCheck.findAll({ where: { instrumentId: instrumentIds, checkedOn: days }, order: [['id', 'ASC']], transaction }) : [],
  ]);
  for (const m of momentRows) moments.set(m.id, m as Moment & { clip?: Clip });
  // The latest check of an instrument on a day is the one applied (ascending order: last wins).
  const zeros = new Map<string, ZeroCheck>();
  for (const z of zeroChecks) zeros.set(zeroKey(z.instrumentId, z.checkedOn), z);
  return {
    moments,
    instruments: new Map(instruments.map((i) => [i.id, i])),
    parts: new Map(parts.map((p) => [p.id, p])),
    users: new Map(users.map((u) => [u.id, u])),
    zeroChecks: zeros,
  };
}

function toDto(r: Reading, ctx: Context): ReadingDto {
  const moment = ctx.moments.get(r.momentId)!;
  const clip = moment.clip!;
  const instrument = ctx.instruments.get(r.instrumentId)!;
  const part = r.partId === null ? null : (ctx.parts.get(r.partId) ?? null);
  const evaluated = evaluateStored(r, instrument, ctx.zeroChecks.get(zeroKey(r.instrumentId, r.takenOn)) ?? null);
  return {
    id: r.id,
    buildId: r.buildId,
    momentId: r.momentId,
    clipId: clip.id,
    clipTitle: clip.title,
    atMs: moment.atMs,
    frameUrl: `/api/clips/${clip.id}/frame?t=${(moment.atMs / 1000).toFixed(3)}`,
    instrumentId: instrument.id,
    instrumentName: instrument.name,
    partId: r.partId,
    partName: part?.name ?? null,
    key: r.key,
    name: r.name,
    kind: r.kind,
    unit: r.unit,
    value: r.value,
    passes: r.passes,
    stops: r.stops,
    values: r.repeatedValues ? r.repeatedValues.map(String) : null,
    entered: r.entered,
    temperatureC: r.temperatureC === null ? null : Number(r.temperatureC),
    material: r.material,
    note: r.note,
    takenOn: r.takenOn,
    reviewState: r.reviewState,
    zeroCheck: evaluated.zeroCheck,
    engine: evaluated.engine,
    engineInstrument: evaluated.engineInstrument,
    result: evaluated.result,
    warnings: evaluated.warnings,
    createdBy: r.createdBy,
    createdByName: ctx.users.get(r.createdBy)?.displayName ?? '',
    updatedBy: r.updatedBy,
    lockVersion: r.lockVersion,
    createdAt: r.createdAt.toISOString(),
    updatedAt: r.updatedAt.toISOString(),
  };
}

/** API shapes for rows, in the order given, at a fixed number of queries. */
export async function toReadingDtos(rows: Reading[], transaction?: Transaction): Promise<ReadingDto[]> {
  if (rows.length === 0) return [];
  const ctx = await loadContext(rows, transaction);
  return rows.map((r) => toDto(r, ctx));
}

/** Every reading of a build as the API shows it, oldest first (for stories and the export). */
export async function readingDtosForBuild(buildId: number): Promise<ReadingDto[]> {
  const rows = await Reading.findAll({ where: { buildId }, order: [['id', 'ASC']], include: [{ model: Moment, as: 'moment', include: [{ model: Clip, as: 'clip' }] }] });
  return toReadingDtos(rows);
}

/** For a clip's chapters: each moment's readings as "name" and the value as shown. */
export async function readingDisplaysForMoments(momentIds: number[]): Promise<Map<number, { name: string; display: string }[]>> {
  const out = new Map<number, { name: string; display: string }[]>();
  if (momentIds.length === 0) return out;
  const rows = await Reading.findAll({ where: { momentId: momentIds }, order: [['id', 'ASC']] });
  for (const dto of await toReadingDtos(rows)) {
    const list = out.get(dto.momentId) ?? [];
    list.push({ name: dto.name, display: dto.result.display });
    out.set(dto.momentId, list);
  }
  return out;
}

/** A reading the user may see (as for its build); 404 for everything else. */
export async function readingForViewer(readingId: number, user: User | undefined): Promise<{ reading: Reading; build: Build }> {
  const reading = await Reading.findByPk(readingId);
  if (!reading) throw notFound('There is no reading with that id.');
  const build = await buildForViewer(reading.buildId, user).catch((err) => {
    throw err instanceof AppError && err.status === 404 ? notFound('There is no reading with that id.') : err;
  });
  return { reading, build };
}

/** A reading the user may change: the build's builder (an admin too, to take it down). */
export async function readingForOwner(readingId: number, user: User | undefined, action: OwnerAction = 'change') {
  const { reading } = await readingForViewer(readingId, user);
  const build = await buildForOwner(reading.buildId, user, action);
  return { reading, build };
}

async function momentOfBuild(momentId: number, buildId: number, transaction?: Transaction): Promise<Moment> {
  const moment = await Moment.findByPk(momentId, { include: [{ model: Clip, as: 'clip', attributes: ['id', 'buildId'] }], transaction });
  const clip = (moment as (Moment & { clip?: Clip }) | null)?.clip;
  if (!moment || !clip || clip.buildId !== buildId) {
    throw invalid([{ path: 'momentId', message: 'that moment is not in a clip of this build: mark the moment again in the player' }]);
  }
  return moment;
}

async function usableInstrument(instrumentId: number, builderId: number, transaction?: Transaction): Promise<Instrument> {
  return checkedInstrument(await Instrument.findByPk(instrumentId, { transaction }), builderId);
}

function checkedInstrument(instrument: Instrument | null, builderId: number): Instrument {
  if (!instrument || instrument.ownerId !== builderId) throw invalid([{ path: 'instrumentId', message: 'that is not one of your instruments: choose one from your register' }]);
  if (instrument.retired) {
    throw invalid([{ path: 'instrumentId', message: `${instrument.name} is retired; bring it back into use on its page, or pick another instrument` }]);
  }
  return instrument;
}

async function partOfBuild(partId: number | null, buildId: number, transaction?: Transaction): Promise<void> {
  if (partId === null) return;
  const part = await Part.findOne({ where: { id: partId, buildId }, transaction });
  if (!part) throw invalid([{ path: 'partId', message: "that is not a part of this build: choose one of its parts, or “Not tied to a part”" }]);
}

/** Rules across fields that the engine needs and the body schema cannot see alone. */
function checkTemperature(kind: ReadingKind, temperatureC: number | null, material: string | null, unit: ReadingFigures['unit']) {
  if (quantityOf(unit) !== 'length') {
    if (temperatureC !== null || material !== null) {
      throw invalid([
        { path: temperatureC !== null ? 'temperatureC' : 'material', message: 'only a length is corrected to 20 °C: leave the part’s temperature and material empty for this reading' },
      ]);
    }
    return;
  }
  if (temperatureC === null) return;
  if (kind !== 'bracket' && material === null) {
    throw invalid([{ path: 'material', message: 'name the material so the value can be corrected to 20 °C' }]);
  }
}

/** Normalises the texts and checks the engine accepts the result with this instrument on this day. */
async function figuresFor(
  texts: { kind: ReadingKind; unit?: ReadingFigures['unit']; value?: string; passes?: string; stops?: string; values?: string[] },
  instrument: Instrument,
  more: { temperatureC: number | null; material: string | null; takenOn: string },
  transaction?: Transaction,
): Promise<ReadingFigures> {
  const normal = normaliseReadingFigures(texts, { unit: instrument.unit, kind: instrument.kind });
  if (!normal.ok) throw invalid(normal.problems);
  checkTemperature(texts.kind, more.temperatureC, more.material, normal.figures.unit);
  const zero = await ZeroCheck.findOne({ where: { instrumentId: instrument.id, checkedOn: more.takenOn }, order: [['id', 'DESC']], transaction });
  const built = toEngineReading(
    { ...normal.figures, kind: texts.kind, temperatureC: more.temperatureC, material: more.material },
    registerOf(instrument),
    zero && texts.kind !== 'bracket' ? { offset: zeroCheckOffset(zero), unit: zero.unit } : null,
  );
  const problems = engineReadingProblems(built.engine);
  if (problems.length) throw invalid(problems);
  return normal.figures;
}

function figureColumns(f: ReadingFigures) {
  return { unit: f.unit, value: f.value, passes: f.passes, stops: f.stops, repeatedValues: f.values, entered: f.entered };
}

/** A reading that passed every check `createReading` makes, with its figures worked out, ready to insert. */
export interface PreparedReading {
  input: ReadingInput;
  instrument: Instrument;
  takenOn: string;
  figures: ReadingFigures;
}

/**
 * The checks of a new reading, in the order `createReading` makes them: its moment is in the
 * build (unless `momentChecked`: the moment is still to be created by the caller), the instrument
 * is the builder's and in use (`instrument` when the caller already has the row), the part is the
 * build's, and the figures fit the instrument on that day. Throws the field-named 400.
 */
export async function prepareReading(
  build: Build,
  input: ReadingInput,
  opts: { momentChecked?: boolean; instrument?: Instrument } = {},
): Promise<PreparedReading> {
  if (!opts.momentChecked) await momentOfBuild(input.momentId, build.id);
  const instrument = opts.instrument ? checkedInstrument(opts.instrument, build.ownerId) : await usableInstrument(input.instrumentId, build.ownerId);
  await partOfBuild(input.partId, build.id);
  const takenOn = input.takenOn ?? todayUtc();
  const figures = await figuresFor(input, instrument, { temperatureC: input.temperatureC, material: input.material, takenOn });
  return { input, instrument, takenOn, figures };
}

/**
 * Inserts a prepared reading at `momentId` (default: the one it was prepared with), deriving or
 * checking its key. The caller's transaction must hold the build row locked (see `createReading`).
 */
export async function insertReading(build: Build, user: User, prepared: PreparedReading, transaction: Transaction, momentId = prepared.input.momentId): Promise<Reading> {
  const { input, instrument, takenOn, figures } = prepared;
  const key = await allocateKey(Reading, build.id, { key: input.key, name: input.name }, transaction, 'reading');
  return Reading.create(
    {
      buildId: build.id,
      momentId,
      instrumentId: instrument.id,
      partId: input.partId,
      key,
      name: input.name,
      kind: input.kind,
      ...figureColumns(figures),
      temperatureC: input.temperatureC === null ? null : String(input.temperatureC),
      material: input.material,
      note: input.note,
      takenOn,
      createdBy: user.id,
      updatedBy: user.id,
    },
    { transaction },
  );
}

/** Logs a reading at a moment of the build; 201's body. */
export async function createReading(build: Build, user: User, input: ReadingInput): Promise<ReadingDto> {
  const prepared = await prepareReading(build, input);
  const reading = await Reading.sequelize!.transaction(async (transaction) => {
    // The build row is the lock: two readings saved at once cannot derive the same key.
    await Build.findByPk(build.id, { transaction, lock: transaction.LOCK.UPDATE });
    return insertReading(build, user, prepared, transaction);
  });
  return (await toReadingDtos([reading]))[0]!;
}

/** The stored columns of a reading, as a revision keeps them. */
function snapshotOf(r: Reading): Record<string, unknown> {
  const plain = r.get({ plain: true }) as Record<string, unknown>;
  for (const [k, v] of Object.entries(plain)) if (v instanceof Date) plain[k] = v.toISOString();
  return plain;
}

const figureFields = ['kind', 'unit', 'value', 'passes', 'stops', 'values', 'instrumentId', 'temperatureC', 'material', 'takenOn'] as const;

/** True when an edit touches what a moderator checked: the figures, the instrument, the day or the moment. */
function whatWasCheckedChanged(reading: Reading, changes: Record<string, unknown>): boolean {
  const same = (a: unknown, b: unknown) => JSON.stringify(a ?? null) === JSON.stringify(b ?? null);
  const compared: [string, unknown][] = [
    ['momentId', reading.momentId],
    ['instrumentId', reading.instrumentId],
    ['kind', reading.kind],
    ['unit', reading.unit],
    ['value', reading.value],
    ['passes', reading.passes],
    ['stops', reading.stops],
    ['repeatedValues', reading.repeatedValues?.map(String) ?? null],
    ['temperatureC', reading.temperatureC === null ? null : String(Number(reading.temperatureC))],
    ['material', reading.material],
    ['takenOn', reading.takenOn],
  ];
  return compared.some(([field, before]) => field in changes && !same(changes[field], before));
}

/**
 * Saves an edit made from `lockVersion`: keeps the reading as it was in reading_revisions,
 * re-checks the figures against the (possibly new) instrument, and refuses a stale version with
 * 409 `edit_conflict`, storing nothing. A changed figure, moment or instrument sends a checked
 * reading back to unchecked: the check was of what was there before.
 */
export async function patchReading(reading: Reading, build: Build, user: User, patch: ReadingPatch): Promise<ReadingDto> {
  if (patch.lockVersion !== reading.lockVersion) throw editConflict('reading', reading);
  const changes: Record<string, unknown> = {};
  if (patch.momentId !== undefined && patch.momentId !== reading.momentId) {
    await momentOfBuild(patch.momentId, build.id);
    changes.momentId = patch.momentId;
  }
  const instrumentChanged = patch.instrumentId !== undefined && patch.instrumentId !== reading.instrumentId;
  const instrument = instrumentChanged
    ? await usableInstrument(patch.instrumentId!, build.ownerId)
    : (await Instrument.findByPk(reading.instrumentId))!;
  if (instrumentChanged) changes.instrumentId = instrument.id;
  if (patch.partId !== undefined && patch.partId !== reading.partId) {
    await partOfBuild(patch.partId, build.id);
    changes.partId = patch.partId;
  }
  for (const field of ['name', 'note', 'takenOn', 'material'] as const) {
    if (patch[field] !== undefined && patch[field] !== reading[field]) changes[field] = patch[field];
  }
  if (patch.temperatureC !== undefined) changes.temperatureC = patch.temperatureC === null ? null : String(patch.temperatureC);

  const refigure = figureFields.some((f) => patch[f] !== undefined);
  if (refigure) {
    const kind = patch.kind ?? reading.kind;
    const kindChanged = patch.kind !== undefined && patch.kind !== reading.kind;
    const entered = reading.entered;
    const text = (field: 'value' | 'passes' | 'stops') => patch[field] ?? (kindChanged ? undefined : (entered[field] as string | undefined));
    const texts = {
      kind,
      unit: patch.unit ?? reading.unit,
      value: text('value'),
      passes: text('passes'),
      stops: text('stops'),
      values: patch.values ?? (kindChanged ? undefined : (entered.values as string[] | undefined)),
    };
    const temperatureC = patch.temperatureC !== undefined ? patch.temperatureC : reading.temperatureC === null ? null : Number(reading.temperatureC);
    const material = patch.material !== undefined ? patch.material : reading.material;
    const figures = await figuresFor(texts, instrument, { temperatureC, material, takenOn: patch.takenOn ?? reading.takenOn });
    Object.assign(changes, { kind }, figureColumns(figures));
  }
  if (patch.key !== undefined && patch.key !== reading.key) changes.key = patch.key;
  if (reading.reviewState !== 'unchecked' && whatWasCheckedChanged(reading, changes)) changes.reviewState = 'unchecked';

  await Reading.sequelize!.transaction(async (transaction) => {
    if (changes.key !== undefined) {
      await Build.findByPk(build.id, { transaction, lock: transaction.LOCK.UPDATE });
      const citing = await storiesCiting(build.id, 'reading', reading.key, transaction);
      if (citing.length) throw citedRefusal('reading', reading.key, citing, 'change its key');
      await allocateKey(Reading, build.id, { key: changes.key as string, name: reading.name }, transaction, 'reading');
    }
    await ReadingRevision.create({ readingId: reading.id, lockVersion: reading.lockVersion, snapshot: snapshotOf(reading), changedBy: user.id }, { transaction });
    await updateWithLock(Reading, reading, patch.lockVersion, { ...changes, updatedBy: user.id }, { what: 'reading', transaction });
  });
  await reading.reload();
  return (await toReadingDtos([reading]))[0]!;
}

/**
 * Removes a reading, refused while a clearance uses it (409 `reading_in_use`) or a story of the
 * build cites it (409 `reading_cited`): either would lose its evidence.
 */
export async function deleteReading(reading: Reading): Promise<void> {
  const terms = await ClearanceTerm.findAll({ where: { readingId: reading.id }, include: [{ model: Clearance, attributes: ['id', 'key', 'name'] }] });
  if (terms.length) throw inUse(terms);
  const citing = await storiesCiting(reading.buildId, 'reading', reading.key);
  if (citing.length) throw citedRefusal('reading', reading.key, citing, 'remove the reading');
  try {
    await reading.destroy();
  } catch (err) {
    // A clearance took it up between the check and the delete.
    if (err instanceof ForeignKeyConstraintError) throw conflict('A clearance uses this reading now. Remove it from the clearance first.', 'reading_in_use');
    throw err;
  }
}

function inUse(terms: ClearanceTerm[]): AppError {
  const clearances = terms.map((t) => (t as ClearanceTerm & { Clearance?: Clearance }).Clearance).filter((c): c is Clearance => Boolean(c));
  const names = clearances.map((c) => `"${c.name}"`).join(', ');
  return new AppError(
    409,
    'reading_in_use',
    `This reading is a term of ${clearances.length === 1 ? 'the clearance' : 'the clearances'} ${names}. Remove it from ${clearances.length === 1 ? 'that clearance' : 'them'} first.`,
    clearances.map((c) => ({ path: 'readingId', message: `used by clearance "${c.key}" (${c.id})` })),
  );
}

/** A page of a build's readings, by keyset on id ascending, with the filters asked for. */
export async function listReadings(buildId: number, q: ReadingListQuery): Promise<{ items: ReadingDto[]; nextAfter: number | null }> {
  const rows = await Reading.findAll({
    where: {
      buildId,
      ...(q.after !== undefined && { id: { [Op.gt]: q.after } }),
      ...(q.partId !== undefined && { partId: q.partId }),
      ...(q.instrumentId !== undefined && { instrumentId: q.instrumentId }),
      ...(q.reviewState !== undefined && { reviewState: q.reviewState }),
    },
    include: [
      {
        model: Moment,
        as: 'moment',
        required: true,
        ...(q.clipId !== undefined && { where: { clipId: q.clipId } }),
        include: [{ model: Clip, as: 'clip' }],
      },
    ],
    order: [['id', 'ASC']],
    limit: q.limit + 1,
  });
  const page = rows.slice(0, q.limit);
  return { items: await toReadingDtos(page), nextAfter: rows.length > q.limit ? page[page.length - 1]!.id : null };
}

export async function getReading(reading: Reading): Promise<ReadingDto> {
  return (await toReadingDtos([reading]))[0]!;
}

/** What the reading was before each saved edit, newest first. */
export async function readingHistory(reading: Reading): Promise<ReadingHistory> {
  const rows = await ReadingRevision.findAll({
    where: { readingId: reading.id },
    include: [{ model: User, as: 'changer', attributes: ['id', 'displayName'] }],
    order: [['id', 'DESC']],
  });
  return {
    items: rows.map((r) => ({
      lockVersion: r.lockVersion,
      snapshot: r.snapshot,
      changedBy: r.changedBy,
      changedByName: (r as ReadingRevision & { changer?: User }).changer?.displayName ?? '',
      changedAt: r.createdAt.toISOString(),
    })),
  };
}
