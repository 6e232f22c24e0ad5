/**
 * Readings: what an instrument showed at a moment of a clip, kept as entered (decimal text and
 * unit), with who logged it, its history, and what the engine makes of it.
 */
import { z } from 'zod';
import { dbIdText, dbPositiveInteger, textWithoutNul } from '../http/db-values.schema';
import { calcInstrumentSchema, readingKeySchema, readingSchema as engineReadingSchema, TEMPERATURE_RANGE_C } from '../measure/calc.schema';
import { quantityKinds } from '../measure/quantities';
import { readingUnitSchema } from '../measure/record-units';
import { materialNames } from '../measure/thermal';
import { isoDateSchema } from '../instruments/instrument.schema';
import { missingFigureMessages, notOfKindMessage, TOO_FEW_VALUES_MESSAGE } from './reading-words';

/** How a reading was taken: one indication, a feeler-blade bracket, or the same size several times. */
export const readingKinds = ['direct', 'bracket', 'repeated'] as const;
export type ReadingKind = (typeof readingKinds)[number];

/** Where a reading stands in review (set by moderators; every reading starts unchecked). */
export const reviewStates = ['unchecked', 'checked', 'flagged'] as const;
export type ReviewState = (typeof reviewStates)[number];

/** Most values in one repeated reading entered by hand. */
export const MAX_ENTERED_REPEATS = 50;

/** A figure as typed, refused in the words of its box when empty ("enter the thickest blade that enters"). */
function figureText(missing: string) {
  return z
    .string({ error: missing })
    .trim()
    .min(1, missing)
    .max(64, 'that is too long for a figure: enter the number and its unit, e.g. 0.0035 in or 64.2 cc');
}

const readingFields = {
  momentId: z.number().int().positive(),
  instrumentId: z.number().int().positive(),
  partId: z.number().int().positive().nullable(),
  /** The name claims and clearances use; derived from `name` when not sent. */
  key: readingKeySchema,
  name: textWithoutNul.trim().min(1, 'name the reading').max(120, 'shorten the name to 120 characters or fewer'),
  kind: z.enum(readingKinds, {
    error: 'choose how it was read: “One indication”, “Feeler bracket” or “Repeated” (kind "direct", "bracket" or "repeated")',
  }),
  /** Unit for texts typed without one; defaults to the instrument's. A unit typed in the text wins. */
  unit: readingUnitSchema,
  /** direct: the indication as shown ("0.5642", "0.5642 in", "564.2 thou"). */
  value: figureText(missingFigureMessages.value),
  /** bracket: the thickest blade that enters. */
  passes: figureText(missingFigureMessages.passes),
  /** bracket: the thinnest blade that does not. */
  stops: figureText(missingFigureMessages.stops),
  /** repeated: each indication. */
  values: z
    .array(figureText(missingFigureMessages.values), { error: missingFigureMessages.values })
    .min(2, TOO_FEW_VALUES_MESSAGE)
    .max(MAX_ENTERED_REPEATS, `enter at most ${MAX_ENTERED_REPEATS} values; log the rest as another reading`),
  /** Part temperature when measured, °C; with `material` the value is corrected to 20 °C. */
  temperatureC: z
    .number({ error: 'enter the temperature as a number of °C, e.g. 21.5, or leave it empty' })
    .min(TEMPERATURE_RANGE_C.min, `enter a temperature from ${TEMPERATURE_RANGE_C.min} to ${TEMPERATURE_RANGE_C.max} °C`)
    .max(TEMPERATURE_RANGE_C.max, `enter a temperature from ${TEMPERATURE_RANGE_C.min} to ${TEMPERATURE_RANGE_C.max} °C`)
    .nullable(),
  material: z
    .enum(materialNames as [string, ...string[]], { error: `choose the material from the list (one of ${materialNames.join(', ')})` })
    .nullable(),
  note: textWithoutNul.trim().max(2000, 'shorten the note to 2000 characters or fewer'),
  /** The day it was measured (zero checks and calibration are judged on this day); default today. */
  takenOn: isoDateSchema,
};

function refineKind(
  v: { kind?: ReadingKind; value?: string; passes?: string; stops?: string; values?: string[]; temperatureC?: number | null; material?: string | null },
  ctx: z.RefinementCtx,
) {
  const need = (field: 'value' | 'passes' | 'stops' | 'values', message: string) => {
    if (v[field] === undefined) ctx.addIssue({ code: 'custom', path: [field], message });
  };
  const forbid = (field: 'value' | 'passes' | 'stops' | 'values') => {
    if (v[field] !== undefined) ctx.addIssue({ code: 'custom', path: [field], message: notOfKindMessage(v.kind, field) });
  };
  if (v.kind === 'direct') {
    need('value', missingFigureMessages.value);
    forbid('passes');
    forbid('stops');
    forbid('values');
  } else if (v.kind === 'bracket') {
    need('passes', missingFigureMessages.passes);
    need('stops', missingFigureMessages.stops);
    forbid('value');
    forbid('values');
  } else if (v.kind === 'repeated') {
    need('values', missingFigureMessages.values);
    forbid('value');
    forbid('passes');
    forbid('stops');
  }
  if (v.temperatureC != null && v.material == null && v.kind !== 'bracket') {
    ctx.addIssue({ code: 'custom', path: ['material'], message: 'name the material so the value can be corrected to 20 °C' });
  }
}

/**
 * Body of `POST /api/builds/:buildId/readings`. Lengths are checked against their unit and the
 * instrument on the server (`normaliseReadingFigures`), with the same messages in the form.
 */
export const readingInputSchema = z
  .strictObject({
    ...readingFields,
    partId: readingFields.partId.default(null),
    key: readingFields.key.optional(),
    unit: readingFields.unit.optional(),
    value: readingFields.value.optional(),
    passes: readingFields.passes.optional(),
    stops: readingFields.stops.optional(),
    values: readingFields.values.optional(),
    temperatureC: readingFields.temperatureC.default(null),
    material: readingFields.material.default(null),
    note: readingFields.note.default(''),
    takenOn: readingFields.takenOn.optional(),
  })
  .superRefine(refineKind);
export type ReadingInput = z.input<typeof readingInputSchema>;

/**
 * Body of `PATCH /api/readings/:readingId`: only the fields sent change. `lockVersion` is the
 * version the editor started from; a stale one is refused with 409 `edit_conflict`. Changing
 * `kind` needs that kind's figures sent with it.
 */
export const readingPatchSchema = z
  .strictObject({ ...readingFields, lockVersion: dbPositiveInteger })
  .partial()
  .required({ lockVersion: true })
  .superRefine((v, ctx) => {
    if (v.kind !== undefined) refineKind(v, ctx);
  });
export type ReadingPatch = z.infer<typeof readingPatchSchema>;

/** A warning a reading carries (it is still used; the reader and moderator see it). */
export const readingWarningCodes = ['calibration-overdue', 'no-calibration-record', 'no-zero-check', 'resolution-converted'] as const;
export const readingWarningSchema = z.object({ code: z.enum(readingWarningCodes), message: z.string() });
export type ReadingWarning = z.infer<typeof readingWarningSchema>;

/**
 * What the engine made of a reading: estimate and standard uncertainty in the reading's unit
 * (and in µm for a length), display text and working.
 */
export const readingResultSchema = z.object({
  /** What the reading measures; lengths only before other quantities could be stored. */
  quantity: z.enum(quantityKinds).default('length'),
  /** Lengths only (null otherwise): the estimate and u in µm. */
  valueUm: z.number().nullable(),
  standardUncertaintyUm: z.number().nonnegative().nullable(),
  /** The estimate and its standard uncertainty in the reading's unit. */
  value: z.number().optional(),
  standardUncertainty: z.number().nonnegative().optional(),
  /** "0.5642 in" at the reading's display step. */
  display: z.string(),
  steps: z.array(z.string()),
});

/** A reading as the API shows it. Figures are decimal text in `unit`, as stored. */
export const readingSchema = z.object({
  id: z.number().int().positive(),
  buildId: z.number().int().positive(),
  momentId: z.number().int().positive(),
  clipId: z.number().int().positive(),
  clipTitle: z.string(),
  atMs: z.number().int().nonnegative(),
  /** The evidence still of the moment. */
  frameUrl: z.string(),
  instrumentId: z.number().int().positive(),
  instrumentName: z.string(),
  partId: z.number().int().positive().nullable(),
  partName: z.string().nullable(),
  key: z.string(),
  name: z.string(),
  kind: z.enum(readingKinds),
  unit: readingUnitSchema,
  value: z.string().nullable(),
  passes: z.string().nullable(),
  stops: z.string().nullable(),
  values: z.array(z.string()).nullable(),
  /** The texts exactly as typed. */
  entered: z.record(z.string(), z.union([z.string(), z.array(z.string())])),
  temperatureC: z.number().nullable(),
  material: z.string().nullable(),
  note: z.string(),
  takenOn: z.string(),
  reviewState: z.enum(reviewStates),
  /** The zero check of that instrument on that day whose offset was applied, if any. */
  zeroCheck: z.object({ id: z.number().int().positive(), offset: z.string(), unit: readingUnitSchema }).nullable(),
  /** The engine's input for this reading (instrument resolution, stated uncertainty, zero offset filled in). */
  engine: engineReadingSchema,
  /** The instrument entry `engine.instrument` names, when the register gives it a calibration, MPE or setting standard. */
  engineInstrument: z.object({ name: z.string(), entry: calcInstrumentSchema }).nullable().default(null),
  result: readingResultSchema,
  warnings: z.array(readingWarningSchema),
  createdBy: z.number().int().positive(),
  createdByName: z.string(),
  updatedBy: z.number().int().positive(),
  lockVersion: z.number().int().positive(),
  createdAt: z.string(),
  updatedAt: z.string(),
});
export type Reading = z.infer<typeof readingSchema>;

export const readingResponseSchema = z.object({ reading: readingSchema });
/** Query of `GET /api/builds/:buildId/readings`: keyset by id, optional filters. */
export const readingListQuerySchema = z.object({
  after: dbIdText.optional(),
  limit: z.coerce.number().int().min(1).max(1000).default(500),
  partId: dbIdText.optional(),
  instrumentId: dbIdText.optional(),
  clipId: dbIdText.optional(),
  reviewState: z.enum(reviewStates).optional(),
});
export const readingListResponseSchema = z.object({ items: z.array(readingSchema), nextAfter: z.number().int().nullable() });
export const readingIdParamsSchema = z.object({ readingId: dbIdText });

/** One earlier state of a reading: what it was before an edit, and who made the edit. */
export const readingRevisionSchema = z.object({
  lockVersion: z.number().int().positive(),
  snapshot: z.record(z.string(), z.unknown()),
  changedBy: z.number().int().positive(),
  changedByName: z.string(),
  changedAt: z.string(),
});
export const readingHistoryResponseSchema = z.object({ items: z.array(readingRevisionSchema) });

/** Column order of the CSV export (`GET /api/builds/:buildId/readings.csv`). */
export const readingCsvColumns = [
  'key',
  'name',
  'kind',
  'unit',
  'value',
  'passes',
  'stops',
  'values',
  'estimate',
  'standard_uncertainty_um',
  'instrument',
  'part',
  'clip',
  'at_s',
  'taken_on',
  'temperature_c',
  'material',
  'review_state',
  'warnings',
  'note',
  'logged_by',
  /** In the reading's unit, for every quantity (the µm column is for lengths only). */
  'standard_uncertainty',
] as const;

/** A key from a reading's name: "Bore depth, as supplied" → "bore-depth-as-supplied". */
export function keyFromName(name: string): string {
  const slug = name
    .normalize('NFKD')
    .replace(/[\u0300-\u036f]/g, '')
    .toLowerCase()
    .replace(/[^a-z0-9]+/g, '-')
    .replace(/^-+|-+$/g, '')
    .slice(0, 40)
    .replace(/-+$/, '');
  return /^[a-z]/.test(slug) ? slug : `r-${slug}`.slice(0, 40).replace(/-+$/, '') || 'reading';
}

/** The longest key a reading or clearance may have (the engine's reading keys are 1–40 characters). */
export const MAX_KEY_LENGTH = 40;

/**
 * `base` when no key in `taken` has it, else `base-2`, `base-3`… (the base cut so the key stays
 * within 40 characters): the same rule the server follows when it derives a key from a name.
 */
export function uniqueKey(base: string, taken: Iterable<string>): string {
  const used = new Set(taken);
  if (!used.has(base)) return base;
  for (let n = 2; ; n += 1) {
    const suffix = `-${n}`;
    const candidate = `${base.slice(0, MAX_KEY_LENGTH - suffix.length).replace(/-+$/, '')}${suffix}`;
    if (!used.has(candidate)) return candidate;
  }
}

/**
 * The key to offer for a name, free among the build's `taken` keys: "Outer rotor to body" →
 * "outer-rotor-to-body", or "outer-rotor-to-body-2" when that one is taken. An empty name takes
 * `fallbackName` ("Clearance" → "clearance", made free the same way).
 */
export function suggestKey(name: string, taken: Iterable<string>, fallbackName = 'Reading'): string {
  return uniqueKey(keyFromName(name.trim() || fallbackName), taken);
}
