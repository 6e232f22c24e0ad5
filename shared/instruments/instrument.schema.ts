/**
 * A builder's register of instruments, and zero checks (what an instrument showed on a setting
 * standard; the difference is subtracted from that day's readings with it).
 */
import { z } from 'zod';
import { dbIdText, dbPositiveInteger, textWithoutNul } from '../http/db-values.schema';
import { quantityOf, type AnyUnit, type QuantityKind } from '../measure/quantities';
import { figureTextIn } from '../measure/quantity-text';
import { readingUnitSchema, type ReadingUnit } from '../measure/record-units';

/** Kinds of bench instrument. */
export const instrumentKinds = [
  'feeler-blades',
  'outside-micrometer',
  'depth-micrometer',
  'inside-micrometer',
  'dial-bore-gauge',
  'dial-test-indicator',
  'caliper',
  'plastic-gauge',
  'straight-edge',
  'burette',
  'degree-wheel',
  'torque-wrench',
  'pressure-gauge',
  'thermometer',
  'scale',
  'timer',
  'other',
] as const;
export type InstrumentKind = (typeof instrumentKinds)[number];

/** What people call each kind. */
export const instrumentKindNames: Readonly<Record<InstrumentKind, string>> = {
  'feeler-blades': 'Feeler blade set',
  'outside-micrometer': 'Outside micrometer',
  'depth-micrometer': 'Depth micrometer',
  'inside-micrometer': 'Inside micrometer',
  'dial-bore-gauge': 'Dial bore gauge',
  'dial-test-indicator': 'Dial test indicator',
  caliper: 'Vernier or digital caliper',
  'plastic-gauge': 'Plastic gauge strip',
  'straight-edge': 'Straight edge with blades',
  burette: 'Burette (cc’ing)',
  'degree-wheel': 'Degree wheel',
  'torque-wrench': 'Torque wrench or gauge',
  'pressure-gauge': 'Pressure gauge',
  thermometer: 'Thermometer',
  scale: 'Scale (weighing)',
  timer: 'Timer',
  other: 'Other',
};

/** What each kind measures; null for "other", which may read anything. */
export const instrumentKindQuantity: Readonly<Record<InstrumentKind, QuantityKind | null>> = {
  'feeler-blades': 'length',
  'outside-micrometer': 'length',
  'depth-micrometer': 'length',
  'inside-micrometer': 'length',
  'dial-bore-gauge': 'length',
  'dial-test-indicator': 'length',
  caliper: 'length',
  'plastic-gauge': 'length',
  'straight-edge': 'length',
  burette: 'volume',
  'degree-wheel': 'angle',
  'torque-wrench': 'torque',
  'pressure-gauge': 'pressure',
  thermometer: 'temperature',
  scale: 'mass',
  timer: 'time',
  other: null,
};

/** The refusal when a kind's unit is of another quantity, or null when they fit. */
export function kindUnitProblem(kind: InstrumentKind, unit: AnyUnit): string | null {
  const quantity = instrumentKindQuantity[kind];
  if (quantity === null || quantityOf(unit) === quantity) return null;
  return `a ${instrumentKindNames[kind].toLowerCase()} reads ${quantity === 'angle' ? 'angles' : quantity}: choose a unit of ${quantity}`;
}

/**
 * Kinds whose zero drifts and is checked on a setting standard before use (common practice, no
 * published source): indicating instruments. Blades, strips and straight edges have no zero.
 */
export const zeroCheckedKinds: ReadonlySet<InstrumentKind> = new Set([
  'outside-micrometer',
  'depth-micrometer',
  'inside-micrometer',
  'dial-bore-gauge',
  'dial-test-indicator',
  'caliper',
  'pressure-gauge',
  'scale',
]);

/** Text of a figure typed into a form (a resolution, an uncertainty, a setting standard's size). */
export const figureTextSchema = z.string({ error: 'enter a figure' }).trim().min(1, 'enter a figure').max(64, 'that is too long for a figure');

/** A calendar date, YYYY-MM-DD. */
export const isoDateSchema = z
  .string({ error: 'enter a date' })
  .regex(/^\d{4}-\d{2}-\d{2}$/, 'dates are written YYYY-MM-DD')
  .refine((d) => !Number.isNaN(Date.parse(`${d}T00:00:00Z`)) && new Date(`${d}T00:00:00Z`).toISOString().startsWith(d), 'that is not a calendar date');

const coverageFactorSchema = z
  .number({ error: 'k must be a number' })
  .min(1, 'k is at least 1')
  .max(10, 'k is at most 10');

const instrumentFields = {
  name: textWithoutNul.trim().min(1, 'name the instrument').max(120, 'at most 120 characters'),
  kind: z.enum(instrumentKinds, { error: `kind must be one of ${instrumentKinds.join(', ')}` }),
  serial: textWithoutNul.trim().max(80, 'at most 80 characters'),
  /** What it shows readings in: a length, or a volume, angle, torque, pressure, temperature, time or mass unit. */
  unit: readingUnitSchema,
  /** One step of the scale or display, as text in `unit` ("0.0001"). */
  resolution: figureTextSchema,
  /** Stated standard uncertainty in `unit` (certificate or maker); null = from the resolution only. */
  statedUncertainty: figureTextSchema.nullable(),
  /** A calibration certificate's expanded uncertainty U in `unit`, with its coverage factor k (u = U/k, GUM 4.3.3). */
  calibrationUncertainty: figureTextSchema.nullable(),
  calibrationCoverageFactor: coverageFactorSchema.nullable(),
  /** The maker's maximum permissible error ±MPE in `unit` (rectangular, u = MPE/√3, GUM 4.3.7). */
  maxPermissibleError: figureTextSchema.nullable(),
  /** The setting standard's expanded uncertainty U in `unit`, with its k. */
  settingStandardUncertainty: figureTextSchema.nullable(),
  settingStandardCoverageFactor: coverageFactorSchema.nullable(),
  calibrationIntervalDays: z.number().int('whole days').min(1, 'at least 1 day').max(3650, 'at most 10 years').nullable(),
  lastCalibratedOn: isoDateSchema.nullable(),
  calibratedBy: textWithoutNul.trim().max(160, 'at most 160 characters'),
  note: textWithoutNul.trim().max(2000, 'at most 2000 characters'),
  retired: z.boolean(),
};

/** Lengths in the register that must not be negative, checked alike. */
const nonNegativeLengths = ['calibrationUncertainty', 'maxPermissibleError', 'settingStandardUncertainty'] as const;

function refineLengths(
  v: {
    kind?: InstrumentKind;
    unit?: string;
    resolution?: string;
    statedUncertainty?: string | null;
    calibrationUncertainty?: string | null;
    calibrationCoverageFactor?: number | null;
    maxPermissibleError?: string | null;
    settingStandardUncertainty?: string | null;
    settingStandardCoverageFactor?: number | null;
  },
  ctx: z.RefinementCtx,
) {
  const pairs = [
    ['calibrationUncertainty', 'calibrationCoverageFactor', 'a calibration'],
    ['settingStandardUncertainty', 'settingStandardCoverageFactor', 'a setting standard'],
  ] as const;
  for (const [u, k, what] of pairs) {
    if (v[u] === undefined && v[k] === undefined) continue;
    const hasU = v[u] != null;
    const hasK = v[k] != null;
    if (hasU !== hasK) ctx.addIssue({ code: 'custom', path: [hasU ? k : u], message: `${what} needs both its expanded uncertainty U and its k` });
  }
  const unit = readingUnitSchema.safeParse(v.unit);
  if (!unit.success) return;
  if (v.kind !== undefined) {
    const problem = kindUnitProblem(v.kind, unit.data);
    if (problem) ctx.addIssue({ code: 'custom', path: ['unit'], message: problem });
  }
  for (const field of nonNegativeLengths) {
    const text = v[field];
    if (text == null) continue;
    const parsed = stepIn(text, unit.data);
    if (!parsed.ok) ctx.addIssue({ code: 'custom', path: [field], message: parsed.message });
    else if (parsed.sign < 0) ctx.addIssue({ code: 'custom', path: [field], message: 'it cannot be negative' });
  }
  if (v.resolution !== undefined) {
    const r = stepIn(v.resolution, unit.data);
    if (!r.ok) ctx.addIssue({ code: 'custom', path: ['resolution'], message: r.message });
    else if (r.sign <= 0) ctx.addIssue({ code: 'custom', path: ['resolution'], message: 'resolution must be greater than 0' });
  }
  if (v.statedUncertainty != null) {
    const u = stepIn(v.statedUncertainty, unit.data);
    if (!u.ok) ctx.addIssue({ code: 'custom', path: ['statedUncertainty'], message: u.message });
    else if (u.sign < 0) ctx.addIssue({ code: 'custom', path: ['statedUncertainty'], message: 'uncertainty cannot be negative' });
  }
}

/** A step or uncertainty typed in `unit`: its decimal text and sign, or the refusal. */
export function stepIn(text: string, unit: ReadingUnit): { ok: true; text: string; sign: number } | { ok: false; message: string } {
  const parsed = figureTextIn(text, unit);
  if (!parsed.ok) return parsed;
  const v = parsed.figure.value;
  return { ok: true, text: parsed.text, sign: v.n === 0n ? 0 : Number(v.s) };
}

/** Body of `POST /api/instruments`. */
export const instrumentInputSchema = z
  .strictObject({
    ...instrumentFields,
    serial: instrumentFields.serial.default(''),
    statedUncertainty: instrumentFields.statedUncertainty.default(null),
    calibrationUncertainty: instrumentFields.calibrationUncertainty.default(null),
    calibrationCoverageFactor: instrumentFields.calibrationCoverageFactor.default(null),
    maxPermissibleError: instrumentFields.maxPermissibleError.default(null),
    settingStandardUncertainty: instrumentFields.settingStandardUncertainty.default(null),
    settingStandardCoverageFactor: instrumentFields.settingStandardCoverageFactor.default(null),
    calibrationIntervalDays: instrumentFields.calibrationIntervalDays.default(null),
    lastCalibratedOn: instrumentFields.lastCalibratedOn.default(null),
    calibratedBy: instrumentFields.calibratedBy.default(''),
    note: instrumentFields.note.default(''),
    retired: instrumentFields.retired.default(false),
  })
  .superRefine(refineLengths);
export type InstrumentInput = z.input<typeof instrumentInputSchema>;

/**
 * Body of `PATCH /api/instruments/:instrumentId`: only the fields sent change; `lockVersion`
 * is the version the editor started from (409 `edit_conflict` when someone saved since).
 * Changing `unit` needs `resolution` sent with it.
 */
export const instrumentPatchSchema = z
  .strictObject({ ...instrumentFields, lockVersion: dbPositiveInteger })
  .partial()
  .required({ lockVersion: true })
  .superRefine((v, ctx) => {
    if (v.unit !== undefined && v.resolution === undefined) {
      ctx.addIssue({ code: 'custom', path: ['resolution'], message: 'send the resolution in the new unit' });
    }
  })
  .superRefine(refineLengths);
export type InstrumentPatch = z.infer<typeof instrumentPatchSchema>;

/** Calibration state on a given day. */
export const calibrationStates = ['in-date', 'overdue', 'no-record'] as const;
export type CalibrationState = (typeof calibrationStates)[number];

/** A zero check as the API shows it. `offset` = shown − standard, in `unit`. */
export const zeroCheckSchema = z.object({
  id: z.number().int().positive(),
  instrumentId: z.number().int().positive(),
  checkedOn: z.string(),
  unit: readingUnitSchema,
  standardSize: z.string(),
  shown: z.string(),
  offset: z.string(),
  momentId: z.number().int().positive().nullable(),
  note: z.string(),
  createdBy: z.number().int().positive(),
  createdAt: z.string(),
});
export type ZeroCheck = z.infer<typeof zeroCheckSchema>;

/** Body of `POST /api/instruments/:instrumentId/zero-checks`; figures in the instrument's unit. */
export const zeroCheckInputSchema = z.strictObject({
  checkedOn: isoDateSchema,
  standardSize: figureTextSchema,
  shown: figureTextSchema,
  momentId: dbPositiveInteger.nullable().default(null),
  note: textWithoutNul.trim().max(1000).default(''),
});
export type ZeroCheckInput = z.input<typeof zeroCheckInputSchema>;

/** An instrument as the API shows it, with its calibration state today. */
export const instrumentSchema = z.object({
  id: z.number().int().positive(),
  ownerId: z.number().int().positive(),
  name: z.string(),
  kind: z.enum(instrumentKinds),
  serial: z.string(),
  unit: readingUnitSchema,
  resolution: z.string(),
  statedUncertainty: z.string().nullable(),
  /** Added with the register's accuracy fields; absent from older answers. */
  calibrationUncertainty: z.string().nullable().default(null),
  calibrationCoverageFactor: z.number().nullable().default(null),
  maxPermissibleError: z.string().nullable().default(null),
  settingStandardUncertainty: z.string().nullable().default(null),
  settingStandardCoverageFactor: z.number().nullable().default(null),
  calibrationIntervalDays: z.number().int().nullable(),
  lastCalibratedOn: z.string().nullable(),
  /** lastCalibratedOn + interval; null when either is missing. */
  calibrationDueOn: z.string().nullable(),
  calibrationState: z.enum(calibrationStates),
  calibratedBy: z.string(),
  note: z.string(),
  retired: z.boolean(),
  needsZeroCheck: z.boolean(),
  latestZeroCheck: zeroCheckSchema.nullable(),
  lockVersion: z.number().int().positive(),
  createdAt: z.string(),
  updatedAt: z.string(),
});
export type Instrument = z.infer<typeof instrumentSchema>;

export const instrumentResponseSchema = z.object({ instrument: instrumentSchema });
export const instrumentListResponseSchema = z.object({ items: z.array(instrumentSchema), nextAfter: z.number().int().nullable() });
export const instrumentListQuerySchema = z.object({
  after: dbIdText.optional(),
  limit: z.coerce.number().int().min(1).max(200).default(100),
});
export const instrumentIdParamsSchema = z.object({ instrumentId: dbIdText });
/** Response of `GET /api/instruments/:instrumentId/zero-checks`: newest first; `nextBefore` asks for the page after. */
export const zeroCheckListResponseSchema = z.object({ items: z.array(zeroCheckSchema), nextBefore: z.number().int().nullable().default(null) });
/** Query of `GET /api/instruments/:instrumentId/zero-checks`: keyset `before` = the id of the last check shown. */
export const zeroCheckListQuerySchema = z.object({
  before: dbIdText.optional(),
  limit: z.coerce.number().int().min(1).max(200).default(100),
});
export const zeroCheckResponseSchema = z.object({ zeroCheck: zeroCheckSchema });

/** The day a calibration falls due, YYYY-MM-DD, or null. */
export function calibrationDueOn(lastCalibratedOn: string | null, intervalDays: number | null): string | null {
  if (!lastCalibratedOn || !intervalDays) return null;
  const d = new Date(`${lastCalibratedOn}T00:00:00Z`);
  d.setUTCDate(d.getUTCDate() + intervalDays);
  return d.toISOString().slice(0, 10);
}

/** Calibration state of an instrument on `day` (YYYY-MM-DD): overdue after the due date. */
export function calibrationStateOn(
  instrument: { lastCalibratedOn: string | null; calibrationIntervalDays: number | null },
  day: string,
): CalibrationState {
  const due = calibrationDueOn(instrument.lastCalibratedOn, instrument.calibrationIntervalDays);
  if (!due) return 'no-record';
  return day > due ? 'overdue' : 'in-date';
}
