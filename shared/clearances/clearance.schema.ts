/**
 * Clearances: a signed sum of a build's readings (bore depth − rotor height), judged against a
 * spec version. The figures are never stored: they are computed from the readings each time,
 * by the same engine on the server and in the browser.
 */
import { z } from 'zod';
import { dbIdText, dbPositiveInteger, textWithoutNul } from '../http/db-values.schema';
import { budgetLineSchema, COVERAGE_FACTOR_RANGE, readingKeySchema, unitSchema } from '../measure/calc.schema';
import { decisionRules, verdicts } from '../measure/spec';
import { reviewStates } from '../readings/reading.schema';

/** Ids of the clearance templates (shared/clearances/templates.ts). */
export const clearanceTemplateIds = ['end-float', 'feeler-gap', 'bearing-clearance', 'material-removed', 'custom'] as const;
export type ClearanceTemplateId = (typeof clearanceTemplateIds)[number];

/** A reading taken into a clearance with a sign. */
export const clearanceTermInputSchema = z.strictObject({
  readingId: z.number().int().positive(),
  sign: z.union([z.literal(1), z.literal(-1)], { error: 'sign must be 1 or -1' }),
});

const coverageFactorMessage = `enter k as a number from ${COVERAGE_FACTOR_RANGE.min} to ${COVERAGE_FACTOR_RANGE.max}, or leave it empty for a 95 % interval`;

const clearanceFields = {
  key: readingKeySchema,
  name: textWithoutNul.trim().min(1, 'name the clearance').max(120, 'shorten the name to 120 characters or fewer'),
  template: z.enum(clearanceTemplateIds).nullable(),
  terms: z
    .array(clearanceTermInputSchema)
    .min(1, 'pick at least one reading')
    .max(20, 'a clearance takes at most 20 readings: remove a term')
    .superRefine((terms, ctx) => {
      const seen = new Set<number>();
      terms.forEach((t, i) => {
        // GUM eq. (10) for uncorrelated inputs: one reading, one term.
        if (seen.has(t.readingId)) ctx.addIssue({ code: 'custom', path: [i, 'readingId'], message: 'this reading is already a term: pick another reading, or remove this term' });
        seen.add(t.readingId);
      });
    }),
  specVersionId: z.number().int().positive().nullable(),
  /** A fixed k, or null for a 95 % coverage interval worked out by the engine (t-factor or Monte Carlo). */
  coverageFactor: z
    .number({ error: coverageFactorMessage })
    .min(COVERAGE_FACTOR_RANGE.min, coverageFactorMessage)
    .max(COVERAGE_FACTOR_RANGE.max, coverageFactorMessage)
    .nullable(),
  note: textWithoutNul.trim().max(2000, 'shorten the note to 2000 characters or fewer'),
};

/** Body of `POST /api/builds/:buildId/clearances`. `key` is derived from `name` when not sent. */
export const clearanceInputSchema = z.strictObject({
  ...clearanceFields,
  key: clearanceFields.key.optional(),
  template: clearanceFields.template.default(null),
  specVersionId: clearanceFields.specVersionId.default(null),
  coverageFactor: clearanceFields.coverageFactor.default(null),
  note: clearanceFields.note.default(''),
});
export type ClearanceInput = z.input<typeof clearanceInputSchema>;

/** Body of `PATCH /api/clearances/:clearanceId`: only what is sent changes; `lockVersion` as for readings. */
export const clearancePatchSchema = z
  .strictObject({ ...clearanceFields, lockVersion: dbPositiveInteger })
  .partial()
  .required({ lockVersion: true });
export type ClearancePatch = z.infer<typeof clearancePatchSchema>;

/** Limits of the spec in µm, for a band picture. */
export const bandUmSchema = z.object({
  minUm: z.number().nullable(),
  maxUm: z.number().nullable(),
  preferredMinUm: z.number().nullable(),
  preferredMaxUm: z.number().nullable(),
  rejectUm: z.number().nullable(),
});

/**
 * What the second engine adds to a result: how the interval was found, the interval, the
 * probability of conformance and the budget. Optional: results judged before it lack them.
 */
export const coverageResultFields = {
  method: z.enum(['gum', 'monte-carlo']).optional(),
  coverageProbability: z.number().optional(),
  /** True when k was chosen rather than worked out from the coverage probability. */
  fixedCoverageFactor: z.boolean().optional(),
  effectiveDegreesOfFreedom: z.number().nullable().optional(),
  intervalUm: z.tuple([z.number(), z.number()]).optional(),
  probabilityOfConformance: z.number().nullable().optional(),
  budget: z.array(budgetLineSchema).optional(),
  warnings: z.array(z.string()).optional(),
};

/** What the engine makes of a clearance. */
export const clearanceResultSchema = z.object({
  /** The unit the working is written in (the spec's, else the first reading's). */
  unit: unitSchema,
  valueUm: z.number(),
  standardUncertaintyUm: z.number().nonnegative(),
  expandedUncertaintyUm: z.number().nonnegative(),
  /** U/u_c: the k chosen, or the one the coverage interval implies. */
  coverageFactor: z.number(),
  /** "0.0047 in ± 0.00031 in (k = 2)". */
  display: z.string(),
  verdict: z.enum(verdicts).nullable(),
  /** Against the preferred band and the reject limit, by the same rule; null when the spec has none. */
  preferredVerdict: z.enum(verdicts).nullable(),
  rejectVerdict: z.enum(verdicts).nullable(),
  rule: z.enum(decisionRules).nullable(),
  band: bandUmSchema.nullable(),
  steps: z.array(z.string()),
  ...coverageResultFields,
});
export type ClearanceResult = z.infer<typeof clearanceResultSchema>;

/** A clearance as the API shows it. `result` is null when `problems` says why it cannot be worked out. */
export const clearanceSchema = z.object({
  id: z.number().int().positive(),
  buildId: z.number().int().positive(),
  key: z.string(),
  name: z.string(),
  template: z.enum(clearanceTemplateIds).nullable(),
  terms: z.array(z.object({ readingId: z.number().int().positive(), readingKey: z.string(), readingName: z.string(), sign: z.union([z.literal(1), z.literal(-1)]) })),
  specVersionId: z.number().int().positive().nullable(),
  spec: z
    .object({
      specId: z.number().int().positive(),
      name: z.string(),
      version: z.number().int().positive(),
      sourceKind: z.string(),
      sourceText: z.string(),
      /** A newer version of the spec exists than the one attached. */
      newerVersion: z.number().int().positive().nullable(),
    })
    .nullable(),
  coverageFactor: z.number().nullable(),
  note: z.string(),
  reviewState: z.enum(reviewStates),
  result: clearanceResultSchema.nullable(),
  problems: z.array(z.string()),
  lockVersion: z.number().int().positive(),
  createdAt: z.string(),
  updatedAt: z.string(),
});
export type Clearance = z.infer<typeof clearanceSchema>;

export const clearanceResponseSchema = z.object({ clearance: clearanceSchema });
export const clearanceListQuerySchema = z.object({
  after: dbIdText.optional(),
  limit: z.coerce.number().int().min(1).max(500).default(200),
});
export const clearanceListResponseSchema = z.object({ items: z.array(clearanceSchema), nextAfter: z.number().int().nullable() });
export const clearanceIdParamsSchema = z.object({ clearanceId: dbIdText });
