/**
 * A builder's register of instruments, and zero checks (what an instrument showed on a setting
 * standard; the difference is subtracted from that day's readings with it).
 */
import { z } from 'zod';
import { dbIdText, dbPositiveInteger, textWithoutNul } from '../http/db-values.schema';
import { unitSchema } from '../measure/calc.schema';
import { lengthTextIn, lengthTextSchema } from '../measure/length-text';

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
  other: 'Other',
};

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
]);

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
  unit: unitSchema,
  /** One step of the scale or display, as text in `unit` ("0.0001"). */
  resolution: lengthTextSchema,
  /** Stated standard uncertainty in `unit` (certificate or maker); null = from the resolution only. */
  statedUncertainty: lengthTextSchema.nullable(),
  /** A calibration certificate's expanded uncertainty U in `unit`, with its coverage factor k (u = U/k, GUM 4.3.3). */
  calibrationUncertainty: lengthTextSchema.nullable(),
  calibrationCoverageFactor: coverageFactorSchema.nullable(),
  /** The maker's maximum permissible error ±MPE in `unit` (rectangular, u = MPE/√3, GUM 4.3.7). */
  maxPermissibleError: lengthTextSchema.nullable(),
  /** The setting standard's expanded uncertainty U in `unit`, with its k. */
  settingStandardUncertainty: lengthTextSchema.nullable(),
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
  const unit = unitSchema.safeParse(v.unit);
  if (!unit.success) return;
  for (const field of nonNegativeLengths) {
    const text = v[field];
    if (text == null) continue;
    const parsed = lengthTextIn(text, unit.data);
    if (!parsed.ok) ctx.addIssue({ code: 'custom', path: [field], message: parsed.message });
    else if (parsed.length.pm < 0n) ctx.addIssue({ code: 'custom', path: [field], message: 'it cannot be negative' });
  }
  if (v.resolution !== undefined) {
    const r = lengthTextIn(v.resolution, unit.data);
    if (!r.ok) ctx.addIssue({ code: 'custom', path: ['resolution'], message: r.message });
    else if (r.length.pm <= 0n) ctx.addIssue({ code: 'custom', path: ['resolution'], message: 'resolution must be greater than 0' });
  }
  if (v.statedUncertainty != null) {
    const u = lengthTextIn(v.statedUncertainty, unit.data);
    if (!u.ok) ctx.addIssue({ code: 'custom', path: ['statedUncertainty'], message: u.message });
    else if (u.length.pm < 0n) ctx.addIssue({ code: 'custom', path: ['statedUncertainty'], message: 'uncertainty cannot be negative' });
  }
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
  unit: unitSchema,
  standardSize: z.string(),
  shown: z.string(),
  offset: z.string(),
  momentId: z.number().int().positive().nullable(),
  note: z.string(),
  createdBy: z.number().int().positive(),
  createdAt: z.string(),
});
export type ZeroCheck = z.infer<typeof zeroCheckSchema>;

/** Body of `POST /api/instruments/:instrumentId/zero-checks`; lengths in the instrument's unit. */
export const zeroCheckInputSchema = z.strictObject({
  checkedOn: isoDateSchema,
  standardSize: lengthTextSchema,
  shown: lengthTextSchema,
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
  unit: unitSchema,
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
