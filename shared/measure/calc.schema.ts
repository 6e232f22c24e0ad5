/**
 * The public calculator API (`POST /api/calc`): request and response schemas, shared by the
 * server's validation, the browser's form and `computeCalc`.
 *
 * Lengths are JSON numbers in the reading's (or spec's) `unit`; resolution, uncertainty and
 * zeroOffset are in the reading's unit. A length must be a whole number of picometres in its unit
 * (at most 8 decimal places in in, 5 in thou, 4 in tenth, 9 in mm, 6 in um) and within ±2 m.
 * JSON numbers cannot carry trailing zeros, so send `resolution` when it matters: without it a
 * direct reading's resolution is taken as one step of the last decimal place sent.
 */
import { z } from 'zod';
import { lengthFieldProblem } from './length-field';
import { materialNames, lookupMaterial } from './thermal';
import { decisionRules, verdicts } from './spec';
import { lengthUnits, type LengthUnit } from './units';

/** Most readings in one request. */
export const MAX_READINGS = 100;
/** Most terms in one clearance. */
export const MAX_TERMS = 100;
/** Most values in one repeated reading. */
export const MAX_REPEATED_VALUES = 1000;
/** Allowed coverage factors: k from 1 to 4 (GUM 6.3: k is typically 2 to 3). */
export const COVERAGE_FACTOR_RANGE = { min: 1, max: 4 } as const;
/** Allowed measuring temperatures, °C: a workshop, not a furnace. */
export const TEMPERATURE_RANGE_C = { min: -50, max: 150 } as const;
/** Allowed explicit expansion coefficients, per K (Invar is ~1.6e-6; plastics reach ~2e-4 but are not measured here). */
export const EXPANSION_RANGE_PER_K = { min: -1e-5, max: 1e-4 } as const;

const TEN_MM_PM = 10_000_000_000n;

function finite(field: string) {
  return z.number({
    error: (issue) => (issue.input === undefined ? `${field} is required` : `${field} must be a finite number`),
  });
}

/** Schema of a length unit code. */
export const unitSchema = z.enum(lengthUnits, { error: 'unit must be one of in, thou, tenth, mm, um' });

const READING_KEY_MESSAGE = 'reading keys are 1–40 letters, digits, - or _, starting with a letter';

/** Schema of the key naming a reading: 1–40 letters, digits, - or _, starting with a letter. */
export const readingKeySchema = z.string().regex(/^[A-Za-z][A-Za-z0-9_-]{0,39}$/, READING_KEY_MESSAGE);

type Ctx = z.RefinementCtx;

function checkLength(
  ctx: Ctx,
  path: (string | number)[],
  value: number | undefined,
  unit: LengthUnit,
  bounds?: Parameters<typeof lengthFieldProblem>[3],
) {
  if (value === undefined) return;
  const field = path.map(String).join('.');
  const problem = lengthFieldProblem(field, value, unit, bounds);
  if (problem) ctx.addIssue({ code: 'custom', message: problem.message, path });
}

const positiveResolution = {
  minPm: 0n,
  minExclusive: true,
  minText: 'greater than 0',
  maxPm: TEN_MM_PM,
  maxText: 'no coarser than 10 mm (0.3937 in)',
} as const;
const nonNegative = { minPm: 0n, minText: 'at least 0' } as const;

/** A single reading from an indicating instrument (micrometer, depth micrometer, bore gauge…). */
export const directReadingSchema = z
  .strictObject({
    kind: z.literal('direct'),
    value: finite('value'),
    unit: unitSchema,
    resolution: finite('resolution').optional(),
    uncertainty: finite('uncertainty').optional(),
    zeroOffset: finite('zeroOffset').optional(),
    temperatureC: finite('temperatureC')
      .min(TEMPERATURE_RANGE_C.min, `temperatureC must be at least ${TEMPERATURE_RANGE_C.min} °C`)
      .max(TEMPERATURE_RANGE_C.max, `temperatureC must be at most ${TEMPERATURE_RANGE_C.max} °C`)
      .optional(),
    expansionPerK: finite('expansionPerK')
      .min(EXPANSION_RANGE_PER_K.min, `expansionPerK must be at least ${EXPANSION_RANGE_PER_K.min} per K`)
      .max(EXPANSION_RANGE_PER_K.max, `expansionPerK must be at most ${EXPANSION_RANGE_PER_K.max} per K (write 11.7e-6, not 11.7)`)
      .optional(),
    material: z
      .string({ error: 'material must be text' })
      .max(40, 'material must be at most 40 characters')
      .refine((name) => lookupMaterial(name) !== undefined, {
        message: `material must be one of ${materialNames.join(', ')}`,
      })
      .optional(),
  })
  .superRefine((reading, ctx) => {
    checkLength(ctx, ['value'], reading.value, reading.unit);
    checkLength(ctx, ['resolution'], reading.resolution, reading.unit, positiveResolution);
    checkLength(ctx, ['uncertainty'], reading.uncertainty, reading.unit, nonNegative);
    checkLength(ctx, ['zeroOffset'], reading.zeroOffset, reading.unit);
    if (reading.temperatureC !== undefined && reading.expansionPerK === undefined && reading.material === undefined) {
      ctx.addIssue({
        code: 'custom',
        path: ['temperatureC'],
        message: 'temperatureC needs a material or an expansionPerK to correct to 20 °C',
      });
    }
  });

/** Feeler blades: the thickest blade that enters (`passes`) and the thinnest that does not (`stops`). */
export const bracketReadingSchema = z
  .strictObject({
    kind: z.literal('bracket'),
    passes: finite('passes'),
    stops: finite('stops'),
    unit: unitSchema,
  })
  .superRefine((reading, ctx) => {
    checkLength(ctx, ['passes'], reading.passes, reading.unit, nonNegative);
    checkLength(ctx, ['stops'], reading.stops, reading.unit, nonNegative);
    if (reading.stops <= reading.passes) {
      ctx.addIssue({
        code: 'custom',
        path: ['stops'],
        message: 'stops must be thicker than passes (the thinnest blade that does not enter is thicker than the thickest that does)',
      });
    }
  });

/**
 * The same size measured several times; the mean is used. `zeroOffset` (what the instrument
 * showed on its setting standard that day, minus the standard) is subtracted from the mean;
 * `uncertainty` is a stated standard uncertainty of the instrument, combined with the rest.
 */
export const repeatedReadingSchema = z
  .strictObject({
    kind: z.literal('repeated'),
    values: z
      .array(finite('values[]'), { error: 'values must be a list of numbers' })
      .min(2, 'values needs at least 2 numbers (use kind "direct" for one)')
      .max(MAX_REPEATED_VALUES, `values may hold at most ${MAX_REPEATED_VALUES} numbers`),
    unit: unitSchema,
    resolution: finite('resolution').optional(),
    uncertainty: finite('uncertainty').optional(),
    zeroOffset: finite('zeroOffset').optional(),
  })
  .superRefine((reading, ctx) => {
    reading.values.forEach((value, index) => checkLength(ctx, ['values', index], value, reading.unit));
    checkLength(ctx, ['resolution'], reading.resolution, reading.unit, positiveResolution);
    checkLength(ctx, ['uncertainty'], reading.uncertainty, reading.unit, nonNegative);
    checkLength(ctx, ['zeroOffset'], reading.zeroOffset, reading.unit);
  });

/** One reading of any kind, told apart by `kind`. */
export const readingSchema = z.discriminatedUnion('kind', [directReadingSchema, bracketReadingSchema, repeatedReadingSchema], {
  error: 'kind must be "direct", "bracket" or "repeated"',
});

/** A term of a clearance: a reading added (+1) or subtracted (−1). */
export const termSchema = z.strictObject({
  reading: z.string({ error: 'reading must name a reading' }).max(40, 'reading must be at most 40 characters'),
  sign: z.union([z.literal(1), z.literal(-1)], { error: 'sign must be 1 or -1' }),
});

/** The spec a calculator request may be judged against. */
export const calcSpecSchema = z
  .strictObject({
    min: finite('min').optional(),
    max: finite('max').optional(),
    unit: unitSchema,
    rule: z.enum(decisionRules, { error: 'rule must be "guarded" or "simple"' }).optional(),
  })
  .superRefine((spec, ctx) => {
    if (spec.min === undefined && spec.max === undefined) {
      ctx.addIssue({ code: 'custom', path: ['min'], message: 'spec needs a min, a max or both' });
    }
    checkLength(ctx, ['min'], spec.min, spec.unit);
    checkLength(ctx, ['max'], spec.max, spec.unit);
    if (spec.min !== undefined && spec.max !== undefined && spec.min > spec.max) {
      ctx.addIssue({ code: 'custom', path: ['min'], message: 'min must not be greater than max' });
    }
  });

/** Body of `POST /api/calc`. */
export const calcRequestSchema = z
  .strictObject({
    readings: z
      .record(readingKeySchema, readingSchema, {
        error: (issue) =>
          issue.code === 'invalid_key' ? READING_KEY_MESSAGE : 'readings must be an object of named readings',
      })
      .refine((readings) => Object.keys(readings).length >= 1, 'readings needs at least one reading')
      .refine((readings) => Object.keys(readings).length <= MAX_READINGS, `readings may hold at most ${MAX_READINGS} readings`),
    terms: z
      .array(termSchema, { error: 'terms must be a list' })
      .min(1, 'terms needs at least one term')
      .max(MAX_TERMS, `terms may hold at most ${MAX_TERMS} terms`),
    spec: calcSpecSchema.optional(),
    coverageFactor: finite('coverageFactor')
      .min(COVERAGE_FACTOR_RANGE.min, `coverageFactor must be at least ${COVERAGE_FACTOR_RANGE.min}`)
      .max(COVERAGE_FACTOR_RANGE.max, `coverageFactor must be at most ${COVERAGE_FACTOR_RANGE.max}`)
      .optional(),
  })
  .superRefine((request, ctx) => {
    const seen = new Set<string>();
    request.terms.forEach((term, index) => {
      if (!Object.hasOwn(request.readings, term.reading)) {
        ctx.addIssue({
          code: 'custom',
          path: ['terms', index, 'reading'],
          message: `terms.${index}.reading names "${term.reading}", which is not in readings`,
        });
      } else if (seen.has(term.reading)) {
        // Two terms on one reading are fully correlated; eq. (10) for uncorrelated inputs would be wrong.
        ctx.addIssue({
          code: 'custom',
          path: ['terms', index, 'reading'],
          message: `terms.${index}.reading uses "${term.reading}" a second time; each reading may appear in one term`,
        });
      }
      seen.add(term.reading);
    });
  });

/** A validated calculator request. */
export type CalcRequest = z.infer<typeof calcRequestSchema>;
/** A validated reading. */
export type Reading = z.infer<typeof readingSchema>;
/** A validated direct reading. */
export type DirectReading = z.infer<typeof directReadingSchema>;
/** A validated bracket (feeler blade) reading. */
export type BracketReading = z.infer<typeof bracketReadingSchema>;
/** A validated repeated reading. */
export type RepeatedReading = z.infer<typeof repeatedReadingSchema>;
/** A validated clearance term. */
export type Term = z.infer<typeof termSchema>;
/** A validated calculator spec. */
export type CalcSpec = z.infer<typeof calcSpecSchema>;

/** Response of `POST /api/calc`. Lengths in micrometres. `verdict` is null when no spec was sent. */
export const calcResponseSchema = z.object({
  value_um: z.number(),
  standardUncertainty_um: z.number().nonnegative(),
  expandedUncertainty_um: z.number().nonnegative(),
  coverageFactor: z.number(),
  verdict: z.enum(verdicts).nullable(),
  readings: z.record(z.string(), z.object({ value_um: z.number(), standardUncertainty_um: z.number().nonnegative() })),
  steps: z.array(z.string()),
});

/** Response of `POST /api/calc`. */
export type CalcResponse = z.infer<typeof calcResponseSchema>;
