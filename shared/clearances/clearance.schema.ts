/**
 * Results ("clearances" in the API): what is worked out from a build's readings and judged
 * against a spec version. Either a signed sum of readings (bore depth − rotor height) or a
 * formula over them (compression ratio from cc'd volumes, radial from diametral). The figures
 * are never stored: they are computed from the readings each time, by the same engine on the
 * server and in the browser.
 */
import { z } from 'zod';
import { dbIdText, dbPositiveInteger, textWithoutNul } from '../http/db-values.schema';
import { anyUnitSchema, budgetLineSchema, constantSchema, COVERAGE_FACTOR_RANGE, readingKeySchema } from '../measure/calc.schema';
import { FORMULA_MAX_LENGTH } from '../measure/formula';
import { formulaTemplates } from '../measure/formula-templates';
import { quantityKinds } from '../measure/quantities';
import { decisionRules, verdicts } from '../measure/spec';
import { reviewStates } from '../readings/reading.schema';

/** Ids of the signed-sum templates (shared/clearances/templates.ts). */
export const sumTemplateIds = ['end-float', 'feeler-gap', 'bearing-clearance', 'material-removed', 'custom'] as const;
/** Ids of every template: the signed sums and the formulas (shared/measure/formula-templates.ts). */
export const clearanceTemplateIds = [...sumTemplateIds, ...formulaTemplates.map((t) => t.id)] as readonly string[] as readonly [string, ...string[]];
export type ClearanceTemplateId = string;

const templateSchema = z.string().refine((id) => clearanceTemplateIds.includes(id), { message: `template must be one of ${clearanceTemplateIds.join(', ')}` });

/** A reading taken into a result: with a sign in a sum, under a name (`symbol`) in a formula. */
export const clearanceTermInputSchema = z.strictObject({
  readingId: z.number().int().positive(),
  sign: z.union([z.literal(1), z.literal(-1)], { error: 'sign must be 1 or -1' }).default(1),
  /** The name the formula uses for this reading (a template's slot, or the reading's key). */
  symbol: readingKeySchema.optional(),
});

/** The named constants of a formula (a target size, 180°), exact and without uncertainty. */
const constantsSchema = z.record(readingKeySchema, constantSchema).refine((c) => Object.keys(c).length <= 20, { message: 'at most 20 constants' });

const coverageFactorMessage = `enter k as a number from ${COVERAGE_FACTOR_RANGE.min} to ${COVERAGE_FACTOR_RANGE.max}, or leave it empty for a 95 % interval`;

const clearanceFields = {
  key: readingKeySchema,
  name: textWithoutNul.trim().min(1, 'name the clearance').max(120, 'shorten the name to 120 characters or fewer'),
  template: templateSchema.nullable(),
  terms: z
    .array(clearanceTermInputSchema)
    .min(1, 'pick at least one reading')
    .max(20, 'a result takes at most 20 readings: remove a term')
    .superRefine((terms, ctx) => {
      const seen = new Set<number>();
      const names = new Set<string>();
      terms.forEach((t, i) => {
        // One reading, one input quantity: a reading twice would be counted as two (GUM 5.1).
        if (seen.has(t.readingId)) ctx.addIssue({ code: 'custom', path: [i, 'readingId'], message: 'this reading is already a term: pick another reading, or remove this term' });
        seen.add(t.readingId);
        if (t.symbol !== undefined) {
          if (names.has(t.symbol)) ctx.addIssue({ code: 'custom', path: [i, 'symbol'], message: `"${t.symbol}" names another reading already: give each reading its own name` });
          names.add(t.symbol);
        }
      });
    }),
  /** A formula over the terms' symbols and the constants; null for a signed sum of the terms. */
  formula: textWithoutNul.trim().min(1, 'write the formula, or choose a signed sum').max(FORMULA_MAX_LENGTH, `a formula is at most ${FORMULA_MAX_LENGTH} characters`).nullable(),
  constants: constantsSchema,
  /** The unit to state the result in; null for the spec's, else the natural one. */
  resultUnit: anyUnitSchema.nullable(),
  specVersionId: z.number().int().positive().nullable(),
  /** A fixed k, or null for a 95 % coverage interval worked out by the engine (t-factor or Monte Carlo). */
  coverageFactor: z
    .number({ error: coverageFactorMessage })
    .min(COVERAGE_FACTOR_RANGE.min, coverageFactorMessage)
    .max(COVERAGE_FACTOR_RANGE.max, coverageFactorMessage)
    .nullable(),
  note: textWithoutNul.trim().max(2000, 'shorten the note to 2000 characters or fewer'),
};

/** A formula names each of its readings: every term carries a symbol, and only a formula uses them. */
function refineFormula(v: { formula?: string | null; terms?: { symbol?: string | undefined }[] }, ctx: z.RefinementCtx) {
  if (v.formula === undefined || v.terms === undefined) return;
  v.terms.forEach((t, i) => {
    if (v.formula !== null && t.symbol === undefined) ctx.addIssue({ code: 'custom', path: ['terms', i, 'symbol'], message: 'name this reading as the formula uses it' });
  });
}

/** Body of `POST /api/builds/:buildId/clearances`. `key` is derived from `name` when not sent. */
export const clearanceInputSchema = z
  .strictObject({
    ...clearanceFields,
    key: clearanceFields.key.optional(),
    template: clearanceFields.template.default(null),
    specVersionId: clearanceFields.specVersionId.default(null),
    coverageFactor: clearanceFields.coverageFactor.default(null),
    note: clearanceFields.note.default(''),
    formula: clearanceFields.formula.default(null),
    constants: clearanceFields.constants.default({}),
    resultUnit: clearanceFields.resultUnit.default(null),
  })
  .superRefine(refineFormula);
export type ClearanceInput = z.input<typeof clearanceInputSchema>;

/** Body of `PATCH /api/clearances/:clearanceId`: only what is sent changes; `lockVersion` as for readings. */
export const clearancePatchSchema = z
  .strictObject({ ...clearanceFields, lockVersion: dbPositiveInteger })
  .partial()
  .required({ lockVersion: true })
  .superRefine(refineFormula);
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

/** The limits of the spec in the result's unit, for a band picture of any quantity. */
export const bandInUnitSchema = z.object({
  min: z.number().nullable(),
  max: z.number().nullable(),
  preferredMin: z.number().nullable(),
  preferredMax: z.number().nullable(),
  reject: z.number().nullable(),
});

/** What the engine makes of a result. */
export const clearanceResultSchema = z.object({
  /** What the result is; results judged before other quantities could be stored are lengths. */
  quantity: z.enum(quantityKinds).default('length'),
  /** The unit the working is written in (the chosen one, the spec's, else the natural one). */
  unit: anyUnitSchema,
  /** Lengths only (null for any other quantity): the value, u and U in µm. */
  valueUm: z.number().nullable(),
  standardUncertaintyUm: z.number().nonnegative().nullable(),
  expandedUncertaintyUm: z.number().nonnegative().nullable(),
  /** The value, u, U and the coverage interval in `unit` (absent from results judged before they were added). */
  value: z.number().optional(),
  standardUncertainty: z.number().nonnegative().optional(),
  expandedUncertainty: z.number().nonnegative().optional(),
  interval: z.tuple([z.number(), z.number()]).optional(),
  bandInUnit: bandInUnitSchema.nullable().optional(),
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
  template: z.string().nullable(),
  terms: z.array(
    z.object({
      readingId: z.number().int().positive(),
      readingKey: z.string(),
      readingName: z.string(),
      sign: z.union([z.literal(1), z.literal(-1)]),
      symbol: z.string().nullable().default(null),
    }),
  ),
  /** A formula over the terms' symbols; null for a signed sum. */
  formula: z.string().nullable().default(null),
  constants: z.record(z.string(), z.object({ value: z.union([z.string(), z.number()]), unit: anyUnitSchema })).default({}),
  resultUnit: anyUnitSchema.nullable().default(null),
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

