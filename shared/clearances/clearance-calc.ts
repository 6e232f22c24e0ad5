/**
 * A clearance worked out from its readings and judged against its spec version: the same code
 * in the browser's live calculator and on the server, so both show the same figures and working.
 */
import { evaluateCalc } from '../measure/calc';
import { calcRequestSchema, type CalcRequest, type Reading as EngineReading } from '../measure/calc.schema';
import { formatLength, formatResult } from '../measure/format';
import { rejectWords, verdictWords } from '../measure/spec';
import { judgeSpec, specSchema as engineSpecSchema } from '../measure/spec.schema';
import { picometresToMicrometres, type LengthUnit } from '../measure/units';
import { toEngineSpec, type SpecVersion } from '../specs/spec-library.schema';
import type { ClearanceResult } from './clearance.schema';

/** One reading in the sum: its key (as claims name it), the engine's reading and its sign. */
export interface ClearanceTermInput {
  key: string;
  engine: EngineReading;
  sign: 1 | -1;
}

const um = (pm: bigint | undefined | null) => (pm === undefined || pm === null ? null : picometresToMicrometres(pm));

/**
 * The clearance Σ sign·reading with its combined and expanded uncertainty (GUM eq. 10, 6.2.1)
 * by `evaluateCalc`, and, with a spec, the verdict against its band, its preferred band and its
 * reject limit by the spec's rule (`judgeSpec`). Problems (a reading the engine refuses, a spec
 * whose figures do not hold together) come back as sentences instead of a result.
 */
export function computeClearance(input: {
  terms: ClearanceTermInput[];
  spec: SpecVersion | null;
  coverageFactor: number;
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
    terms: input.terms.map((t) => ({ reading: t.key, sign: t.sign })),
    ...(engineSpec && {
      spec: {
        unit: engineSpec.unit,
        ...(engineSpec.min !== undefined && { min: engineSpec.min }),
        ...(engineSpec.max !== undefined && { max: engineSpec.max }),
        rule: engineSpec.rule,
      },
    }),
    coverageFactor: input.coverageFactor,
  } satisfies CalcRequest);
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
    return { ok: false, problems: [err instanceof Error ? err.message : 'the readings could not be worked out'] };
  }
  const unit: LengthUnit = evaluation.unit;
  const k = evaluation.coverageFactor;
  const shown = formatResult(evaluation.valuePm, evaluation.expandedUncertaintyUm, unit);
  const steps = [...evaluation.steps];

  let verdict: ClearanceResult['verdict'] = null;
  let preferredVerdict: ClearanceResult['preferredVerdict'] = null;
  let rejectVerdict: ClearanceResult['rejectVerdict'] = null;
  let band: ClearanceResult['band'] = null;
  if (engineSpec) {
    const judged = judgeSpec(evaluation.valuePm, evaluation.expandedPm, engineSpec);
    verdict = judged.band.verdict;
    const limits = judged.limitsPm;
    band = {
      minUm: um(limits.band.minPm),
      maxUm: um(limits.band.maxPm),
      preferredMinUm: um(limits.preferred?.minPm),
      preferredMaxUm: um(limits.preferred?.maxPm),
      rejectUm: um(limits.rejectPm),
    };
    const at = (pm: bigint) => formatLength(pm, unit, evaluation.displayStepPm);
    if (judged.preferred && limits.preferred) {
      preferredVerdict = judged.preferred.verdict;
      const p = limits.preferred;
      const range = [p.minPm !== undefined ? `from ${at(p.minPm)}` : '', p.maxPm !== undefined ? `to ${at(p.maxPm)}` : ''].filter(Boolean).join(' ');
      steps.push(`Preferred band ${range}, same rule: ${verdictWords[judged.preferred.verdict]} (${judged.preferred.verdict}).`);
    }
    if (judged.reject && limits.rejectPm !== null) {
      rejectVerdict = judged.reject.verdict;
      steps.push(
        `Reject limit ${at(limits.rejectPm)} (${judged.reject.side === 'upper' ? 'scrap at or above it' : 'scrap at or below it'}), same rule: ${
          rejectWords[judged.reject.verdict]
        } (${judged.reject.verdict}).`,
      );
    }
  }

  return {
    ok: true,
    result: {
      unit,
      valueUm: picometresToMicrometres(evaluation.valuePm),
      standardUncertaintyUm: evaluation.standardUncertaintyUm,
      expandedUncertaintyUm: evaluation.expandedUncertaintyUm,
      coverageFactor: k,
      display: `${shown.value} ± ${shown.uncertainty} (k = ${k})`,
      verdict,
      preferredVerdict,
      rejectVerdict,
      rule: engineSpec ? engineSpec.rule : null,
      band,
      steps,
    },
  };
}
