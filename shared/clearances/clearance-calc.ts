/**
 * A result worked out from its readings and judged against its spec version: the same code in
 * the browser's live calculator and on the server, so both show the same figures and working.
 */
import { evaluateCalc, resultText } from '../measure/calc';
import { calcRequestSchema, type Reading as EngineReading } from '../measure/calc.schema';
import { specSchema as engineSpecSchema } from '../measure/spec.schema';
import { isLengthUnit } from '../measure/units';
import { Fraction } from '../measure/exact';
import { factorNumber, fromBase, toBase, type AnyUnit } from '../measure/quantities';
import { toEngineSpec, type SpecVersion } from '../specs/spec-library.schema';
import type { ClearanceResult } from './clearance.schema';

/**
 * One reading of the result: the name the model uses for it (its key in a sum, its symbol in a
 * formula), the engine's reading and, in a sum, its sign.
 */
export interface ClearanceTermInput {
  key: string;
  engine: EngineReading;
  sign: 1 | -1;
}

/** A formula over the terms' names, with its constants. */
export interface ResultFormula {
  text: string;
  constants: Record<string, { value: string | number; unit: AnyUnit }>;
}

/**
 * The clearance Σ sign·reading with its budget, coverage interval and, with a spec, the verdict
 * against its band, its preferred band and its reject limit by the spec's rule, all by
 * `evaluateCalc`. `coverageFactor` null asks for a 95 % interval worked out by the engine.
 * Problems (a reading the engine refuses, a spec whose figures do not hold together) come back
 * as sentences instead of a result.
 */
export function computeClearance(input: {
  terms: ClearanceTermInput[];
  spec: SpecVersion | null;
  coverageFactor: number | null;
  instruments?: Record<string, unknown>;
  /** A formula over the terms' names; a signed sum when absent or null. */
  formula?: ResultFormula | null;
  /** The unit to state the result in; the spec's, else the model's natural one, when absent. */
  resultUnit?: AnyUnit | null;
}): { ok: true; result: ClearanceResult } | { ok: false; problems: string[] } {
  const problems: string[] = [];
  if (input.terms.length === 0) return { ok: false, problems: ['pick at least one reading'] };

  let engineSpec = null;
  if (input.spec) {
    const parsed = engineSpecSchema.safeParse(toEngineSpec(input.spec));
    if (parsed.success) engineSpec = parsed.data;
    else for (const issue of parsed.error.issues) problems.push(`spec: ${issue.path.map(String).join('.') || 'figures'}: ${issue.message}`);
  }

  const readings: Record<string, EngineReading> = {};
  for (const term of input.terms) {
    Object.defineProperty(readings, term.key, { value: term.engine, enumerable: true, writable: true, configurable: true });
  }
  const request = calcRequestSchema.safeParse({
    readings,
    ...(input.instruments && Object.keys(input.instruments).length > 0 && { instruments: input.instruments }),
    ...(input.formula
      ? { formula: input.formula.text, ...(Object.keys(input.formula.constants).length > 0 && { constants: input.formula.constants }) }
      : { terms: input.terms.map((t) => ({ reading: t.key, sign: t.sign })) }),
    ...(input.resultUnit && { resultUnit: input.resultUnit }),
    // The stored decimal texts, so a limit keeps every digit it was written with.
    ...(engineSpec &&
      input.spec && {
        spec: {
          unit: engineSpec.unit,
          ...(input.spec.min !== null && { min: input.spec.min }),
          ...(input.spec.max !== null && { max: input.spec.max }),
          ...((input.spec.preferredMin !== null || input.spec.preferredMax !== null) && {
            preferred: {
              ...(input.spec.preferredMin !== null && { min: input.spec.preferredMin }),
              ...(input.spec.preferredMax !== null && { max: input.spec.preferredMax }),
            },
          }),
          ...(input.spec.reject !== null && { reject: input.spec.reject }),
          rule: engineSpec.rule,
        },
      }),
    ...(input.coverageFactor !== null && { coverageFactor: input.coverageFactor }),
  });
  if (!request.success) {
    for (const issue of request.error.issues) {
      const [head, key, ...rest] = issue.path.map(String);
      const where = head === 'readings' && key ? [key, ...rest].join('.') : issue.path.map(String).join('.');
      problems.push(`${where || 'clearance'}: ${issue.message}`);
    }
  }
  if (problems.length || !request.success) return { ok: false, problems };

  let evaluation;
  try {
    evaluation = evaluateCalc(request.data);
  } catch (err) {
    const message =
      err && typeof err === 'object' && 'issues' in err && Array.isArray((err as { issues: unknown[] }).issues)
        ? (err as { issues: { message: string }[] }).issues.map((i) => i.message).join('; ')
        : err instanceof Error
          ? err.message
          : 'the readings could not be worked out';
    return { ok: false, problems: [message] };
  }
  const unit = evaluation.unit;
  const isLength = evaluation.quantity === 'length' && evaluation.valuePm !== null && isLengthUnit(unit);
  const umPerUnit = isLength ? factorNumber(unit) / 1e-6 : 1;
  const toUm = isLength ? fromBase(toBase(new Fraction(1), unit), 'um') : new Fraction(1);
  // Exact: a limit in inches is a whole number of picometres, so its µm figure is a plain decimal.
  const um = (x: Fraction | undefined) => (x === undefined ? null : x.mul(toUm).valueOf());
  const inUnit = (x: Fraction | undefined) => (x === undefined ? null : x.valueOf());
  const band = evaluation.bandExact;
  return {
    ok: true,
    result: {
      quantity: evaluation.quantity,
      unit,
      valueUm: isLength ? Number(evaluation.valuePm) / 1e6 : null,
      standardUncertaintyUm: isLength ? (evaluation.standardUncertaintyUm ?? 0) : null,
      expandedUncertaintyUm: isLength ? (evaluation.expandedUncertaintyUm ?? 0) : null,
      value: evaluation.value.valueOf(),
      standardUncertainty: evaluation.standardUncertainty,
      expandedUncertainty: evaluation.expandedUncertainty,
      interval: [evaluation.interval[0], evaluation.interval[1]],
      bandInUnit: band
        ? { min: inUnit(band.min), max: inUnit(band.max), preferredMin: inUnit(band.preferredMin), preferredMax: inUnit(band.preferredMax), reject: inUnit(band.reject) }
        : null,
      coverageFactor: evaluation.coverageFactor,
      display: resultText(evaluation),
      verdict: evaluation.judgement?.verdict ?? null,
      preferredVerdict: evaluation.preferredJudgement?.verdict ?? null,
      rejectVerdict: evaluation.rejectJudgement?.verdict ?? null,
      rule: engineSpec ? engineSpec.rule : null,
      band: band && isLength
        ? {
            minUm: um(band.min),
            maxUm: um(band.max),
            preferredMinUm: um(band.preferredMin),
            preferredMaxUm: um(band.preferredMax),
            rejectUm: um(band.reject),
          }
        : null,
      steps: [...evaluation.steps],
      method: evaluation.method,
      coverageProbability: evaluation.coverageProbability,
      fixedCoverageFactor: input.coverageFactor !== null,
      effectiveDegreesOfFreedom: Number.isFinite(evaluation.effectiveDegreesOfFreedom) ? evaluation.effectiveDegreesOfFreedom : null,
      ...(isLength && { intervalUm: [evaluation.interval[0] * umPerUnit, evaluation.interval[1] * umPerUnit] as [number, number] }),
      probabilityOfConformance: evaluation.probabilityOfConformance,
      budget: evaluation.budget.map((line) => ({ ...line })),
      warnings: [...evaluation.warnings],
    },
  };
}
