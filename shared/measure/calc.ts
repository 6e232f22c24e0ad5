/**
 * The calculator: readings → clearance → expanded uncertainty → verdict, with the working.
 * `computeCalc` is the public API's engine and runs unchanged in the browser and on the server.
 */
import { ZodError } from 'zod';
import { calcRequestSchema, type CalcRequest, type CalcResponse } from './calc.schema';
import { sumReadings, type SignedReading } from './clearance';
import { formatLength, formatNumber, formatUncertainty, symbolFor, twoSignificantDecimals } from './format';
import { lengthNumberToPicometres } from './length-field';
import { evaluateReading, type EvaluatedReading } from './readings';
import { DEFAULT_DECISION_RULE, judge, type BandPm, type Judgement } from './spec';
import { DEFAULT_COVERAGE_FACTOR, expandedUncertainty } from './uncertainty';
import {
  type LengthUnit,
  micrometresToPicometres,
  micrometresToUnitNumber,
  picometresToMicrometres,
  unitSymbols,
} from './units';

/** Everything the calculator worked out, for a page to draw (the API sends a subset). */
export interface CalcEvaluation {
  readonly readings: ReadonlyMap<string, EvaluatedReading>;
  readonly terms: readonly SignedReading[];
  /** Clearance, integer picometres. */
  readonly valuePm: bigint;
  readonly standardUncertaintyUm: number;
  readonly expandedUncertaintyUm: number;
  /** U to the nearest picometre, as used in the verdict. */
  readonly expandedPm: bigint;
  readonly coverageFactor: number;
  /** The unit the working is written in: the spec's, else the first term's reading's. */
  readonly unit: LengthUnit;
  readonly displayStepPm: bigint;
  /** Spec limits in picometres, when a spec was given. */
  readonly band: BandPm | null;
  readonly judgement: Judgement | null;
  readonly steps: readonly string[];
}

/**
 * Validates a request body. Throws the ZodError (a typed validation error whose issues name the
 * fields) on bad input; never throws anything else.
 */
export function parseCalcRequest(input: unknown): CalcRequest {
  const result = calcRequestSchema.safeParse(input);
  if (!result.success) throw result.error;
  return result.data;
}

function guardedText(pm: bigint, unit: LengthUnit, decimals: number): string {
  const text = formatNumber(pm, unit, decimals);
  return `${text} ${symbolFor(unit, text)}`;
}

function listOfU(terms: readonly SignedReading[]): string {
  if (terms.length > 8) return `the ${terms.length} terms' u²`;
  return terms.map(({ reading }) => `(${formatUncertainty(reading.standardUncertaintyUm, 'um')})²`).join(' + ');
}

/** Works out a validated request. Pure and exact where the module comments say so. */
export function evaluateCalc(request: CalcRequest): CalcEvaluation {
  const readings = new Map<string, EvaluatedReading>();
  const steps: string[] = [];
  for (const [key, reading] of Object.entries(request.readings)) {
    const evaluated = evaluateReading(key, reading);
    readings.set(key, evaluated);
  }
  const terms: SignedReading[] = request.terms.map((term) => {
    const reading = readings.get(term.reading);
    if (!reading) throw new ZodError([{ code: 'custom', path: ['terms'], message: `terms name "${term.reading}", which is not in readings`, input: term }]);
    return { reading, sign: term.sign };
  });
  // Working for the readings in the clearance first, in term order, then any others (a diameter for a per-size figure).
  const inTerms = new Set(request.terms.map((t) => t.reading));
  for (const { reading } of terms) steps.push(...reading.steps);
  for (const [key, reading] of readings) if (!inTerms.has(key)) steps.push(...reading.steps);

  const first = terms[0];
  const unit: LengthUnit = request.spec?.unit ?? first?.reading.unit ?? 'mm';
  const sum = sumReadings(terms);
  const k = request.coverageFactor ?? DEFAULT_COVERAGE_FACTOR;
  const expandedUm = expandedUncertainty(sum.standardUncertaintyUm, k);
  const expandedPm = micrometresToPicometres(expandedUm);

  const show = (pm: bigint, step: bigint) =>
    unit === 'um' ? formatLength(pm, unit, step) : `${formatLength(pm, unit, step)} (${formatLength(pm, 'um', step)})`;
  const showU = (um: number) =>
    unit === 'um' ? formatUncertainty(um, unit) : `${formatUncertainty(um, unit)} (${formatUncertainty(um, 'um')})`;

  const expression = terms
    .map(({ reading, sign }, index) => `${sign === 1 ? (index === 0 ? '' : '+ ') : '− '}${reading.key}`)
    .join(' ');
  const numbers = terms
    .map(({ reading, sign }, index) => {
      const text = formatLength(reading.valuePm, unit, reading.displayStepPm);
      return `${sign === 1 ? (index === 0 ? '' : '+ ') : '− '}${text}`;
    })
    .join(' ');
  steps.push(
    terms.length > 12
      ? `Clearance = signed sum of ${terms.length} terms = ${show(sum.valuePm, sum.displayStepPm)}.`
      : `Clearance = ${expression} = ${numbers} = ${show(sum.valuePm, sum.displayStepPm)}.`,
  );
  steps.push(
    `Combined standard uncertainty, readings uncorrelated, sensitivity coefficients ±1 (GUM eq. 10): u_c = √(Σ u²) = √(${listOfU(
      terms,
    )}) = ${showU(sum.standardUncertaintyUm)}.`,
  );
  steps.push(`Expanded uncertainty U = k·u_c with k = ${k} (GUM 6.2.1): U = ${showU(expandedUm)}.`);

  let band: BandPm | null = null;
  let judgement: Judgement | null = null;
  if (request.spec) {
    const spec = request.spec;
    const minPm = spec.min === undefined ? undefined : lengthNumberToPicometres(spec.min, spec.unit) ?? undefined;
    const maxPm = spec.max === undefined ? undefined : lengthNumberToPicometres(spec.max, spec.unit) ?? undefined;
    band = { ...(minPm !== undefined && { minPm }), ...(maxPm !== undefined && { maxPm }) };
    const rule = spec.rule ?? DEFAULT_DECISION_RULE;
    judgement = judge(sum.valuePm, expandedPm, band, rule);
    const uDecimals = twoSignificantDecimals(Math.abs(micrometresToUnitNumber(expandedUm, unit)));
    const limitText = (pm: bigint) => guardedText(pm, unit, uDecimals);
    const specText = (value: number) => `${value} ${unitSymbols[spec.unit]}`;
    const bandText =
      spec.min !== undefined && spec.max !== undefined
        ? `${specText(spec.min)} to ${specText(spec.max)}`
        : spec.min !== undefined
          ? `at least ${specText(spec.min)}`
          : `at most ${specText(spec.max as number)}`;
    const lim = judgement.limits;
    if (rule === 'guarded') {
      const accept = [
        lim.acceptMinPm !== undefined ? `${limitText(lim.acceptMinPm)} ≤` : '',
        'value',
        lim.acceptMaxPm !== undefined ? `≤ ${limitText(lim.acceptMaxPm)}` : '',
      ]
        .filter(Boolean)
        .join(' ');
      const reject = [
        lim.rejectBelowPm !== undefined ? `value ≤ ${limitText(lim.rejectBelowPm)}` : '',
        lim.rejectAbovePm !== undefined ? `value ≥ ${limitText(lim.rejectAbovePm)}` : '',
      ]
        .filter(Boolean)
        .join(' or ');
      steps.push(
        `Spec ${bandText}, guarded rule: within spec when ${accept} (limits moved in by U); out of spec when ${reject} (limits moved out by U); too close to call between.`,
      );
    } else {
      steps.push(`Spec ${bandText}, simple rule: within spec when the value itself is inside the limits (inclusive); otherwise out of spec.`);
    }
    steps.push(
      `Verdict: ${show(sum.valuePm, sum.displayStepPm)} ± ${showU(expandedUm)} (k = ${k}) is ${judgement.words} (${judgement.verdict}). ${judgement.ruleText}`,
    );
  } else {
    steps.push('No spec given, so no verdict.');
  }

  return {
    readings,
    terms,
    valuePm: sum.valuePm,
    standardUncertaintyUm: sum.standardUncertaintyUm,
    expandedUncertaintyUm: expandedUm,
    expandedPm,
    coverageFactor: k,
    unit,
    displayStepPm: sum.displayStepPm,
    band,
    judgement,
    steps,
  };
}

/** The API's JSON shape for an evaluation. */
export function toCalcResponse(evaluation: CalcEvaluation): CalcResponse {
  const readings: CalcResponse['readings'] = {};
  for (const [key, reading] of evaluation.readings) {
    // Keys are validated (start with a letter), so none is "__proto__"; defineProperty keeps that true regardless.
    Object.defineProperty(readings, key, {
      value: { value_um: picometresToMicrometres(reading.valuePm), standardUncertainty_um: reading.standardUncertaintyUm },
      enumerable: true,
      writable: true,
      configurable: true,
    });
  }
  return {
    value_um: picometresToMicrometres(evaluation.valuePm),
    standardUncertainty_um: evaluation.standardUncertaintyUm,
    expandedUncertainty_um: evaluation.expandedUncertaintyUm,
    coverageFactor: evaluation.coverageFactor,
    verdict: evaluation.judgement?.verdict ?? null,
    readings,
    steps: [...evaluation.steps],
  };
}

/**
 * The public calculator: validates `input` against `calcRequestSchema` and returns the response.
 * Throws only a ZodError, naming the field, on bad input.
 */
export function computeCalc(input: unknown): CalcResponse {
  return toCalcResponse(evaluateCalc(parseCalcRequest(input)));
}
