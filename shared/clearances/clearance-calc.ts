/**
 * A clearance worked out from its readings and judged against its spec version: the same code
 * in the browser's live calculator and on the server, so both show the same figures and working.
 */
import { evaluateCalc, resultText } from '../measure/calc';
import { calcRequestSchema, type Reading as EngineReading } from '../measure/calc.schema';
import { specSchema as engineSpecSchema } from '../measure/spec.schema';
import type { LengthUnit } from '../measure/units';
import { Fraction } from '../measure/exact';
import { factorNumber, fromBase, toBase } from '../measure/quantities';
import { toEngineSpec, type SpecVersion } from '../specs/spec-library.schema';
import type { ClearanceResult } from './clearance.schema';

/** One reading in the sum: its key (as claims name it), the engine's reading and its sign. */
export interface ClearanceTermInput {
  key: string;
  engine: EngineReading;
  sign: 1 | -1;
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
    terms: input.terms.map((t) => ({ reading: t.key, sign: t.sign })),
    ...(engineSpec && {
      spec: {
        unit: engineSpec.unit,
        ...(engineSpec.min !== undefined && { min: engineSpec.min }),
        ...(engineSpec.max !== undefined && { max: engineSpec.max }),
        ...(engineSpec.preferred && {
          preferred: {
            ...(engineSpec.preferred.min !== undefined && { min: engineSpec.preferred.min }),
            ...(engineSpec.preferred.max !== undefined && { max: engineSpec.preferred.max }),
          },
        }),
        ...(engineSpec.reject !== undefined && { reject: engineSpec.reject }),
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
  if (evaluation.quantity !== 'length' || evaluation.valuePm === null) return { ok: false, problems: ['a clearance is a length'] };
  const unit = evaluation.unit as LengthUnit;
  const umPerUnit = factorNumber(unit) / 1e-6;
  const toUm = fromBase(toBase(new Fraction(1), unit), 'um');
  // Exact: a limit in inches is a whole number of picometres, so its µm figure is a plain decimal.
  const um = (x: Fraction | undefined) => (x === undefined ? null : x.mul(toUm).valueOf());
  const band = evaluation.bandExact;
  return {
    ok: true,
    result: {
      unit,
      valueUm: Number(evaluation.valuePm) / 1e6,
      standardUncertaintyUm: evaluation.standardUncertaintyUm ?? 0,
      expandedUncertaintyUm: evaluation.expandedUncertaintyUm ?? 0,
      coverageFactor: evaluation.coverageFactor,
      display: resultText(evaluation),
      verdict: evaluation.judgement?.verdict ?? null,
      preferredVerdict: evaluation.preferredJudgement?.verdict ?? null,
      rejectVerdict: evaluation.rejectJudgement?.verdict ?? null,
      rule: engineSpec ? engineSpec.rule : null,
      band: band
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
      intervalUm: [evaluation.interval[0] * umPerUnit, evaluation.interval[1] * umPerUnit],
      probabilityOfConformance: evaluation.probabilityOfConformance,
      budget: evaluation.budget.map((line) => ({ ...line })),
      warnings: [...evaluation.warnings],
    },
  };
}
