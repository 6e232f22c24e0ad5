/**
 * The public calculator API (`POST /api/calc`): request and response schemas, shared by the
 * server's validation, the browser's form and `computeCalc`.
 *
 * A figure is a JSON number or a decimal string ("0.5640"). A string keeps its trailing zeros,
 * and with them the resolution they imply; a number cannot (JSON has no 0.5640). Figures are in
 * their reading's (or spec's, or instrument's) `unit`. A length must be a whole number of
 * picometres in its unit (at most 8 decimal places in in, 5 in thou, 4 in tenth, 9 in mm, 6 in
 * um) and within ±2 m, so it is held exactly as sent.
 */
import { z } from 'zod';
import { figureProblem, figureSchema, figureToNumber, type Figure } from './figures';
import { lengthFieldProblem } from './length-field';
import { allUnits, isAnyUnit, quantityOf, type AnyUnit } from './quantities';
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
/** Allowed coverage probabilities (JCGM 101:2008 uses 0.95 and 0.99 in its examples). */
export const COVERAGE_PROBABILITY_RANGE = { min: 0.5, max: 0.999 } as const;
/** The coverage probability used when neither k nor p is chosen (GUM 6.2.3, 6.3.3). */
export const DEFAULT_COVERAGE_PROBABILITY = 0.95;
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

/** Schema of any unit the engine reads: lengths, volumes, angles, torques, pressures, temperatures, time, mass, and "1" for a ratio. */
export const anyUnitSchema = z.enum(allUnits, { error: `unit must be one of ${allUnits.join(', ')}` });

const READING_KEY_MESSAGE = 'reading keys are 1–40 letters, digits, - or _, starting with a letter';

/** Schema of the key naming a reading: 1–40 letters, digits, - or _, starting with a letter. */
export const readingKeySchema = z.string().regex(/^[A-Za-z][A-Za-z0-9_-]{0,39}$/, READING_KEY_MESSAGE);

type Ctx = z.RefinementCtx;

interface Bounds {
  minPm?: bigint;
  minExclusive?: boolean;
  minText?: string;
  maxPm?: bigint;
  maxText?: string;
  positive?: boolean;
  nonNegative?: boolean;
}

function checkFigure(ctx: Ctx, path: (string | number)[], value: Figure | undefined, unit: AnyUnit, bounds: Bounds = {}) {
  if (value === undefined) return;
  const field = path.map(String).join('.');
  const basic = figureProblem(field, value);
  if (basic) {
    ctx.addIssue({ code: 'custom', message: basic, path });
    return;
  }
  if (quantityOf(unit) === 'length') {
    const problem = lengthFieldProblem(field, value, unit as LengthUnit, bounds);
    if (problem) ctx.addIssue({ code: 'custom', message: problem.message, path });
    return;
  }
  const n = figureToNumber(value);
  if (Math.abs(n) > 1e9) ctx.addIssue({ code: 'custom', message: `${field} is too large`, path });
  else if (bounds.positive && !(n > 0)) ctx.addIssue({ code: 'custom', message: `${field} must be greater than 0`, path });
  else if (bounds.nonNegative && n < 0) ctx.addIssue({ code: 'custom', message: `${field} must be at least 0`, path });
}

const positiveResolution: Bounds = {
  minPm: 0n,
  minExclusive: true,
  minText: 'greater than 0',
  maxPm: TEN_MM_PM,
  maxText: 'no coarser than 10 mm (0.3937 in)',
  positive: true,
};
const nonNegative: Bounds = { minPm: 0n, minText: 'at least 0', nonNegative: true };

const temperatureField = (field: string) =>
  finite(field)
    .min(TEMPERATURE_RANGE_C.min, `${field} must be at least ${TEMPERATURE_RANGE_C.min} °C`)
    .max(TEMPERATURE_RANGE_C.max, `${field} must be at most ${TEMPERATURE_RANGE_C.max} °C`);
const expansionField = (field: string) =>
  finite(field)
    .min(EXPANSION_RANGE_PER_K.min, `${field} must be at least ${EXPANSION_RANGE_PER_K.min} per K`)
    .max(EXPANSION_RANGE_PER_K.max, `${field} must be at most ${EXPANSION_RANGE_PER_K.max} per K (write 11.7e-6, not 11.7)`);
const temperatureUncertaintyField = (field: string) =>
  finite(field).min(0, `${field} must be at least 0`).max(50, `${field} must be at most 50 K`);
const expansionUncertaintyField = (field: string) =>
  finite(field).min(0, `${field} must be at least 0`).max(EXPANSION_RANGE_PER_K.max, `${field} must be at most ${EXPANSION_RANGE_PER_K.max} per K`);

const instrumentName = z.string({ error: 'instrument must name an instrument' }).max(40, 'instrument must be at most 40 characters');

/**
 * Where a reading's instrument is, thermally. Left out: at its own temperature (the instrument
 * entry's `temperatureC`, else 20 °C), measured apart from the part's. `same-as-part`: it sits at
 * the part's temperature (GUM H.1: one thermometer for the bench), so the part's `temperatureC`
 * serves both and only their difference is uncertain.
 */
export const instrumentTemperatures = ['same-as-part'] as const;

/** The thermal fields a direct or repeated reading may carry (ISO 1: lengths are stated at 20 °C). */
const thermalFields = {
  temperatureC: temperatureField('temperatureC').optional(),
  /** Standard uncertainty of the part's temperature, K (with `same-as-part`: of the common temperature, GUM H.1's u(θ)). */
  temperatureUncertaintyC: temperatureUncertaintyField('temperatureUncertaintyC').optional(),
  expansionPerK: expansionField('expansionPerK').optional(),
  /** Standard uncertainty of the part's expansion coefficient, per K. */
  expansionUncertaintyPerK: expansionUncertaintyField('expansionUncertaintyPerK').optional(),
  /** `same-as-part`: the instrument sits at the part's temperature (see `instrumentTemperatures`). */
  instrumentTemperature: z.enum(instrumentTemperatures, { error: 'instrumentTemperature must be "same-as-part", or left out for the instrument\'s own temperature' }).optional(),
  /** With `same-as-part`: standard uncertainty of the difference between the part's and the instrument's temperatures, K (GUM H.1's u(δθ)). */
  temperatureDifferenceUncertaintyC: temperatureUncertaintyField('temperatureDifferenceUncertaintyC').optional(),
  /**
   * With `same-as-part`: standard uncertainty of the difference between the part's and the
   * instrument's expansion coefficients, per K (GUM H.1's u(δα)), when it is known better than the
   * two coefficients are (one material). Left out, u(δα) comes from `expansionUncertaintyPerK` and
   * the instrument's `expansionUncertaintyPerK`.
   */
  expansionDifferenceUncertaintyPerK: expansionUncertaintyField('expansionDifferenceUncertaintyPerK').optional(),
  material: z
    .string({ error: 'material must be text' })
    .max(40, 'material must be at most 40 characters')
    .refine((name) => lookupMaterial(name) !== undefined, {
      message: `material must be one of ${materialNames.join(', ')}`,
    })
    .optional(),
};

interface ThermalInput {
  unit: AnyUnit;
  temperatureC?: number | undefined;
  expansionPerK?: number | undefined;
  material?: string | undefined;
  instrumentTemperature?: (typeof instrumentTemperatures)[number] | undefined;
  temperatureDifferenceUncertaintyC?: number | undefined;
  expansionDifferenceUncertaintyPerK?: number | undefined;
}

function checkThermal(reading: ThermalInput, ctx: Ctx) {
  const isLength = quantityOf(reading.unit) === 'length';
  if (!isLength && (reading.expansionPerK !== undefined || reading.material !== undefined)) {
    ctx.addIssue({
      code: 'custom',
      path: [reading.material !== undefined ? 'material' : 'expansionPerK'],
      message: 'a thermal expansion correction applies to lengths only',
    });
  }
  if (isLength && reading.temperatureC !== undefined && reading.expansionPerK === undefined && reading.material === undefined) {
    ctx.addIssue({
      code: 'custom',
      path: ['temperatureC'],
      message: 'temperatureC needs a material or an expansionPerK to correct to 20 °C',
    });
  }
  if (reading.instrumentTemperature === 'same-as-part') {
    if (!isLength) {
      ctx.addIssue({ code: 'custom', path: ['instrumentTemperature'], message: 'instrumentTemperature matters for lengths only (it enters the correction to 20 °C)' });
    } else if (reading.temperatureC === undefined) {
      ctx.addIssue({ code: 'custom', path: ['instrumentTemperature'], message: 'instrumentTemperature "same-as-part" needs the part\'s temperatureC' });
    }
  } else {
    for (const field of ['temperatureDifferenceUncertaintyC', 'expansionDifferenceUncertaintyPerK'] as const) {
      if (reading[field] !== undefined) {
        ctx.addIssue({ code: 'custom', path: [field], message: `${field} applies when the instrument sits at the part's temperature: send instrumentTemperature "same-as-part" with it` });
      }
    }
  }
}

/** What a direct or repeated reading from an indicating instrument may carry besides its figures. */
const indicatingFields = {
  resolution: figureSchema('resolution').optional(),
  uncertainty: figureSchema('uncertainty').optional(),
  zeroOffset: figureSchema('zeroOffset').optional(),
  /** Resolution of the zero check's own reading; the reading's resolution when absent. */
  zeroResolution: figureSchema('zeroResolution').optional(),
  instrument: instrumentName.optional(),
  ...thermalFields,
};

type IndicatingFields = ThermalInput & { resolution?: Figure | undefined; uncertainty?: Figure | undefined; zeroOffset?: Figure | undefined; zeroResolution?: Figure | undefined };

function checkIndicating(reading: IndicatingFields, ctx: Ctx) {
  checkFigure(ctx, ['resolution'], reading.resolution, reading.unit, positiveResolution);
  checkFigure(ctx, ['uncertainty'], reading.uncertainty, reading.unit, nonNegative);
  checkFigure(ctx, ['zeroOffset'], reading.zeroOffset, reading.unit);
  checkFigure(ctx, ['zeroResolution'], reading.zeroResolution, reading.unit, positiveResolution);
  checkThermal(reading, ctx);
}

/** A single reading from an indicating instrument (micrometer, depth micrometer, bore gauge, torque wrench…). */
export const directReadingSchema = z
  .strictObject({
    kind: z.literal('direct'),
    value: figureSchema('value'),
    unit: anyUnitSchema,
    ...indicatingFields,
  })
  .superRefine((reading, ctx) => {
    checkFigure(ctx, ['value'], reading.value, reading.unit);
    checkIndicating(reading, ctx);
  });

/** How a feeler blade went into the gap. */
export const bladeFeels = ['slides', 'drags', 'forced', 'does-not-enter'] as const;
/** A blade's feel. */
export type BladeFeel = (typeof bladeFeels)[number];

/**
 * Feeler blades: the thickest blade that enters (`passes`) and the thinnest that does not
 * (`stops`), with how each went: the one that enters slides or drags; the one that stops does not
 * enter or goes only when forced.
 */
export const bracketReadingSchema = z
  .strictObject({
    kind: z.literal('bracket'),
    passes: figureSchema('passes'),
    stops: figureSchema('stops'),
    unit: unitSchema,
    passesFeel: z.enum(['slides', 'drags'], { error: 'passesFeel must be "slides" or "drags"' }).optional(),
    stopsFeel: z.enum(['does-not-enter', 'forced'], { error: 'stopsFeel must be "does-not-enter" or "forced"' }).optional(),
    instrument: instrumentName.optional(),
  })
  .superRefine((reading, ctx) => {
    checkFigure(ctx, ['passes'], reading.passes, reading.unit, nonNegative);
    checkFigure(ctx, ['stops'], reading.stops, reading.unit, nonNegative);
    if (figureToNumber(reading.stops) <= figureToNumber(reading.passes)) {
      ctx.addIssue({
        code: 'custom',
        path: ['stops'],
        message: 'stops must be thicker than passes (the thinnest blade that does not enter is thicker than the thickest that does)',
      });
    }
  });

/**
 * One feeler blade that enters with a light drag: the gap is about the blade's thickness. `spread`
 * is the half-width of the rectangular distribution around it (0.0005 in when not given: half the
 * usual step between blades of a set, common practice, no published source).
 */
export const bladeReadingSchema = z
  .strictObject({
    kind: z.literal('blade'),
    thickness: figureSchema('thickness'),
    unit: unitSchema,
    feel: z.literal('drags', { error: 'feel must be "drags" (a single blade is a reading only when it drags)' }),
    spread: figureSchema('spread').optional(),
    instrument: instrumentName.optional(),
  })
  .superRefine((reading, ctx) => {
    checkFigure(ctx, ['thickness'], reading.thickness, reading.unit, { ...nonNegative, minPm: 1n, minText: 'greater than 0' });
    checkFigure(ctx, ['spread'], reading.spread, reading.unit, positiveResolution);
  });

/**
 * The same size measured several times; the mean is used, with a Type A uncertainty of n − 1
 * degrees of freedom (GUM 4.2). `zeroOffset` (what the instrument showed on its setting standard
 * that day, minus the standard) is subtracted from the mean; `uncertainty` is a stated standard
 * uncertainty of the instrument, combined with the rest.
 */
export const repeatedReadingSchema = z
  .strictObject({
    kind: z.literal('repeated'),
    values: z
      .array(figureSchema('values[]'), { error: 'values must be a list of numbers' })
      .min(2, 'values needs at least 2 numbers (use kind "direct" for one)')
      .max(MAX_REPEATED_VALUES, `values may hold at most ${MAX_REPEATED_VALUES} numbers`),
    unit: anyUnitSchema,
    ...indicatingFields,
  })
  .superRefine((reading, ctx) => {
    reading.values.forEach((value, index) => checkFigure(ctx, ['values', index], value, reading.unit));
    checkIndicating(reading, ctx);
  });

/** One reading of any kind, told apart by `kind`. */
export const readingSchema = z.discriminatedUnion(
  'kind',
  [directReadingSchema, bracketReadingSchema, bladeReadingSchema, repeatedReadingSchema],
  { error: 'kind must be "direct", "bracket", "blade" or "repeated"' },
);

/** A stated expanded uncertainty with its coverage factor (a calibration certificate, a setting standard's report). */
const expandedWithK = (field: string) =>
  z.strictObject({
    expandedUncertainty: figureSchema(`${field}.expandedUncertainty`),
    coverageFactor: finite(`${field}.coverageFactor`).min(1, `${field}.coverageFactor must be at least 1`).max(10, `${field}.coverageFactor must be at most 10`),
    unit: anyUnitSchema,
  });

/**
 * What an instrument brings to every reading taken with it. Its calibration error is one input
 * quantity shared by those readings (correlation 1, GUM 5.2.2 and F.1.2.3).
 */
export const calcInstrumentSchema = z
  .strictObject({
    /** A calibration certificate's expanded uncertainty U with its k: normal, u = U/k (GUM 4.3.3). */
    calibration: expandedWithK('calibration').optional(),
    /** The maker's maximum permissible error ±MPE: rectangular, u = MPE/√3 (GUM 4.3.7). */
    maxPermissibleError: z.strictObject({ value: figureSchema('maxPermissibleError.value'), unit: anyUnitSchema }).optional(),
    /** The setting standard (gauge block, setting rod) the instrument was zeroed on: U with its k. */
    settingStandard: expandedWithK('settingStandard').optional(),
    /** The instrument's own temperature, °C (GUM H.1): 20 °C when not given; set aside (with its u) for a reading whose instrumentTemperature is "same-as-part". */
    temperatureC: temperatureField('temperatureC').optional(),
    temperatureUncertaintyC: temperatureUncertaintyField('temperatureUncertaintyC').optional(),
    /** The instrument's expansion coefficient, per K: carbon steel's when not given. */
    expansionPerK: expansionField('expansionPerK').optional(),
    expansionUncertaintyPerK: expansionUncertaintyField('expansionUncertaintyPerK').optional(),
  })
  .superRefine((instrument, ctx) => {
    if (instrument.calibration) {
      checkFigure(ctx, ['calibration', 'expandedUncertainty'], instrument.calibration.expandedUncertainty, instrument.calibration.unit, nonNegative);
    }
    if (instrument.maxPermissibleError) {
      checkFigure(ctx, ['maxPermissibleError', 'value'], instrument.maxPermissibleError.value, instrument.maxPermissibleError.unit, nonNegative);
    }
    if (instrument.settingStandard) {
      checkFigure(ctx, ['settingStandard', 'expandedUncertainty'], instrument.settingStandard.expandedUncertainty, instrument.settingStandard.unit, nonNegative);
    }
  });

/** A term of a clearance: a reading added (+1) or subtracted (−1). */
export const termSchema = z.strictObject({
  reading: z.string({ error: 'reading must name a reading' }).max(40, 'reading must be at most 40 characters'),
  sign: z.union([z.literal(1), z.literal(-1)], { error: 'sign must be 1 or -1' }),
});

/** A named exact constant of a formula (a target size, 180°): no uncertainty. */
export const constantSchema = z
  .strictObject({ value: figureSchema('value'), unit: anyUnitSchema })
  .superRefine((constant, ctx) => checkFigure(ctx, ['value'], constant.value, constant.unit));

/** The spec a calculator request may be judged against, in any unit of the result's quantity ("1" for a ratio). */
export const calcSpecSchema = z
  .strictObject({
    min: figureSchema('min').optional(),
    max: figureSchema('max').optional(),
    unit: anyUnitSchema,
    rule: z.enum(decisionRules, { error: 'rule must be "guarded" or "simple"' }).optional(),
    /** A preferred band inside min…max, judged by the same rule. */
    preferred: z.strictObject({ min: figureSchema('preferred.min').optional(), max: figureSchema('preferred.max').optional() }).optional(),
    /** A reject (scrap) limit outside the band, judged by the same rule. */
    reject: figureSchema('reject').optional(),
  })
  .superRefine((spec, ctx) => {
    if (spec.min === undefined && spec.max === undefined) {
      ctx.addIssue({ code: 'custom', path: ['min'], message: 'spec needs a min, a max or both' });
    }
    checkFigure(ctx, ['min'], spec.min, spec.unit);
    checkFigure(ctx, ['max'], spec.max, spec.unit);
    checkFigure(ctx, ['preferred', 'min'], spec.preferred?.min, spec.unit);
    checkFigure(ctx, ['preferred', 'max'], spec.preferred?.max, spec.unit);
    checkFigure(ctx, ['reject'], spec.reject, spec.unit);
    const num = (f: Figure | undefined) => (f === undefined || figureProblem('x', f) ? undefined : figureToNumber(f));
    const min = num(spec.min);
    const max = num(spec.max);
    if (min !== undefined && max !== undefined && min > max) {
      ctx.addIssue({ code: 'custom', path: ['min'], message: 'min must not be greater than max' });
    }
    const reject = num(spec.reject);
    if (reject !== undefined && !((max !== undefined && reject >= max) || (min !== undefined && reject <= min))) {
      ctx.addIssue({ code: 'custom', path: ['reject'], message: 'reject must lie outside the band: at or above max, or at or below min' });
    }
  });

const readingsRecord = z
  .record(readingKeySchema, readingSchema, {
    error: (issue) => (issue.code === 'invalid_key' ? READING_KEY_MESSAGE : 'readings must be an object of named readings'),
  })
  .refine((readings) => Object.keys(readings).length >= 1, 'readings needs at least one reading')
  .refine((readings) => Object.keys(readings).length <= MAX_READINGS, `readings may hold at most ${MAX_READINGS} readings`);

/** Body of `POST /api/calc`. */
export const calcRequestSchema = z
  .strictObject({
    readings: readingsRecord,
    instruments: z
      .record(readingKeySchema, calcInstrumentSchema, {
        error: (issue) => (issue.code === 'invalid_key' ? 'instrument names are 1–40 letters, digits, - or _, starting with a letter' : 'instruments must be an object of named instruments'),
      })
      .optional(),
    terms: z
      .array(termSchema, { error: 'terms must be a list' })
      .min(1, 'terms needs at least one term')
      .max(MAX_TERMS, `terms may hold at most ${MAX_TERMS} terms`)
      .optional(),
    formula: z.string({ error: 'formula must be text' }).trim().min(1, 'formula is empty').max(500, 'formula must be at most 500 characters').optional(),
    constants: z
      .record(readingKeySchema, constantSchema, {
        error: (issue) => (issue.code === 'invalid_key' ? 'constant names are 1–40 letters, digits, - or _, starting with a letter' : 'constants must be an object of named constants'),
      })
      .optional(),
    resultUnit: anyUnitSchema.optional(),
    spec: calcSpecSchema.optional(),
    coverageFactor: finite('coverageFactor')
      .min(COVERAGE_FACTOR_RANGE.min, `coverageFactor must be at least ${COVERAGE_FACTOR_RANGE.min}`)
      .max(COVERAGE_FACTOR_RANGE.max, `coverageFactor must be at most ${COVERAGE_FACTOR_RANGE.max}`)
      .optional(),
    coverageProbability: finite('coverageProbability')
      .min(COVERAGE_PROBABILITY_RANGE.min, `coverageProbability must be at least ${COVERAGE_PROBABILITY_RANGE.min}`)
      .max(COVERAGE_PROBABILITY_RANGE.max, `coverageProbability must be at most ${COVERAGE_PROBABILITY_RANGE.max}`)
      .optional(),
  })
  .superRefine((request, ctx) => {
    if ((request.terms === undefined) === (request.formula === undefined)) {
      ctx.addIssue({
        code: 'custom',
        path: [request.terms === undefined ? 'terms' : 'formula'],
        message: 'send exactly one of terms (a signed sum of readings) or formula (arithmetic over the reading keys)',
      });
    }
    if (request.coverageFactor !== undefined && request.coverageProbability !== undefined) {
      ctx.addIssue({ code: 'custom', path: ['coverageProbability'], message: 'send coverageFactor or coverageProbability, not both' });
    }
    if (request.constants) {
      for (const name of Object.keys(request.constants)) {
        if (Object.hasOwn(request.readings, name)) {
          ctx.addIssue({ code: 'custom', path: ['constants', name], message: `constants.${name} has the name of a reading; give it another name` });
        }
      }
    }
    const seen = new Set<string>();
    (request.terms ?? []).forEach((term, index) => {
      if (!Object.hasOwn(request.readings, term.reading)) {
        ctx.addIssue({
          code: 'custom',
          path: ['terms', index, 'reading'],
          message: `terms.${index}.reading names "${term.reading}", which is not in readings`,
        });
      } else if (seen.has(term.reading)) {
        ctx.addIssue({
          code: 'custom',
          path: ['terms', index, 'reading'],
          message: `terms.${index}.reading uses "${term.reading}" a second time; each reading may appear in one term`,
        });
      }
      seen.add(term.reading);
    });
    for (const [key, reading] of Object.entries(request.readings)) {
      if (reading.instrument === undefined) continue;
      if (!request.instruments || !Object.hasOwn(request.instruments, reading.instrument)) {
        ctx.addIssue({
          code: 'custom',
          path: ['readings', key, 'instrument'],
          message: `readings.${key}.instrument names "${reading.instrument}", which is not in instruments`,
        });
      }
    }
    if (request.resultUnit !== undefined && request.spec !== undefined && isAnyUnit(request.spec.unit)) {
      if (quantityOf(request.resultUnit) !== quantityOf(request.spec.unit)) {
        ctx.addIssue({ code: 'custom', path: ['spec', 'unit'], message: `spec.unit ${request.spec.unit} is not a unit of the same quantity as resultUnit ${request.resultUnit}` });
      }
    }
  });

/** A validated calculator request. */
export type CalcRequest = z.infer<typeof calcRequestSchema>;
/** A calculator request as written (figures may be numbers or decimal strings). */
export type CalcRequestInput = z.input<typeof calcRequestSchema>;
/** A validated reading. */
export type Reading = z.infer<typeof readingSchema>;
/** A validated direct reading. */
export type DirectReading = z.infer<typeof directReadingSchema>;
/** A validated bracket (feeler blade) reading. */
export type BracketReading = z.infer<typeof bracketReadingSchema>;
/** A validated single dragging blade. */
export type BladeReading = z.infer<typeof bladeReadingSchema>;
/** A validated repeated reading. */
export type RepeatedReading = z.infer<typeof repeatedReadingSchema>;
/** A validated instrument entry. */
export type CalcInstrument = z.infer<typeof calcInstrumentSchema>;
/** A validated clearance term. */
export type Term = z.infer<typeof termSchema>;
/** A validated calculator spec. */
export type CalcSpec = z.infer<typeof calcSpecSchema>;

/** One line of an uncertainty budget (JCGM 100:2008 7.2.7: the components and how they were combined). */
export const budgetLineSchema = z.object({
  /** The reading (or readings, comma-separated, for an instrument's shared component). */
  reading: z.string(),
  source: z.string(),
  distribution: z.enum(['normal', 'rectangular', 'student-t']),
  /** In `inputUnit`. */
  standardUncertainty: z.number().nonnegative(),
  inputUnit: z.string(),
  /** What the stated figure was divided by (√3, k); null for a Type A evaluation. */
  divisor: z.number().nullable(),
  /** ∂result/∂input, result unit per input unit. */
  sensitivity: z.number(),
  /** sensitivity × standardUncertainty, in the result's unit. */
  contribution: z.number(),
  /** null when infinite. */
  degreesOfFreedom: z.number().nullable(),
  /** This line's share of the combined variance, 0–1. */
  share: z.number(),
  /** The instrument whose component this is, shared by every reading taken with it. */
  instrument: z.string().nullable(),
});
/** One line of an uncertainty budget. */
export type BudgetLine = z.infer<typeof budgetLineSchema>;

/**
 * Response of `POST /api/calc`. The `_um` fields are in micrometres and are null unless the
 * result is a length; `value`, `standardUncertainty`, `expandedUncertainty`, `coverageInterval`
 * and the budget's contributions are in `unit`. `verdict` is null when no spec was sent.
 */
export const calcResponseSchema = z.object({
  value_um: z.number().nullable(),
  standardUncertainty_um: z.number().nonnegative().nullable(),
  expandedUncertainty_um: z.number().nonnegative().nullable(),
  coverageFactor: z.number(),
  verdict: z.enum(verdicts).nullable(),
  readings: z.record(
    z.string(),
    z.object({
      value_um: z.number().nullable(),
      standardUncertainty_um: z.number().nonnegative().nullable(),
      value: z.number(),
      unit: z.string(),
      standardUncertainty: z.number().nonnegative(),
    }),
  ),
  steps: z.array(z.string()),
  value: z.number(),
  unit: z.string(),
  quantity: z.string(),
  standardUncertainty: z.number().nonnegative(),
  expandedUncertainty: z.number().nonnegative(),
  coverageProbability: z.number(),
  effectiveDegreesOfFreedom: z.number().nullable(),
  method: z.enum(['gum', 'monte-carlo']),
  /** Monte Carlo trials run (also when they only confirmed the GUM interval); null when none ran. */
  trials: z.number().int().nullable(),
  coverageInterval: z.tuple([z.number(), z.number()]),
  probabilityOfConformance: z.number().min(0).max(1).nullable(),
  preferredVerdict: z.enum(verdicts).nullable(),
  rejectVerdict: z.enum(verdicts).nullable(),
  budget: z.array(budgetLineSchema),
  warnings: z.array(z.string()),
});

/** Response of `POST /api/calc`. */
export type CalcResponse = z.infer<typeof calcResponseSchema>;

/** Whether a unit code is a length unit (for the `_um` fields). */
export function isLengthUnitCode(unit: string): unit is LengthUnit {
  return (lengthUnits as readonly string[]).includes(unit);
}
