import { clearanceResultSchema, type Clearance as ClearanceDto, type ClearanceResult } from '@shared/clearances/clearance.schema';
import { formatResult, formatUncertainty } from '@shared/measure/format';
import { formatCoverageFactor, plainNumber } from '@shared/measure/format-quantity';
import { verdictWords, type Verdict } from '@shared/measure/spec';
import { micrometresToPicometres } from '@shared/measure/units';
import type { AsPublished } from '@shared/review/review-sheet.schema';
import type { PublishedEvidence } from '../public/publication';

/*
 * A cited clearance now against the same clearance in the story's current publication, for a
 * story going round again. The publication keeps the figures as judged; since then the engine
 * may have changed (a 95 % interval worked out from the readings instead of k = 2), or the
 * builder may have edited a reading or moved the clearance to another spec version.
 */

/** The published clearance's result, parsed; null when the evidence holds none or an unreadable one. */
export function publishedResult(c: PublishedEvidence['clearances'][number] | undefined): ClearanceResult | null {
  const parsed = clearanceResultSchema.safeParse(c?.result);
  return parsed.success ? parsed.data : null;
}

/** What the sheet shows of the published judgement. */
export function asPublished(result: ClearanceResult, revision: number): AsPublished {
  return {
    revision,
    verdict: result.verdict,
    display: result.display,
    valueUm: result.valueUm,
    expandedUncertaintyUm: result.expandedUncertaintyUm,
    method: result.method ?? null,
  };
}

const verdictText = (v: Verdict | null) => (v ? verdictWords[v] : 'no verdict');
const percent = (p: number) => `${plainNumber(p * 100, 4)} %`;
const methodWords = { gum: 'the GUM with Student’s t', 'monte-carlo': 'a Monte Carlo run (JCGM 101)' } as const;

/** Why U moved, as far as the two results say; null when they do not (the readings moved it). */
function uncertaintyCause(now: ClearanceResult, then: ClearanceResult): string | null {
  const kThen = formatCoverageFactor(then.coverageFactor);
  const kNow = formatCoverageFactor(now.coverageFactor);
  if (now.fixedCoverageFactor) {
    return (then.method === undefined || then.fixedCoverageFactor) && kThen === kNow ? null : `k = ${kNow} is fixed now, k = ${kThen} then`;
  }
  const p = percent(now.coverageProbability ?? 0.95);
  // A result without `method` is the first engine's: always U = 2·u_c.
  if (then.method === undefined || then.fixedCoverageFactor) return `the engine now works out a ${p} interval instead of k = ${kThen}`;
  if (now.method && then.method !== now.method) return `the interval now comes from ${methodWords[now.method]}, then from ${methodWords[then.method]}`;
  return null;
}

/**
 * A short sentence for the moderator when the verdict or the figures (as shown: the value at the
 * finer of the two U's decimal places, U to two significant digits) differ from the published
 * ones; null when they are the same. `edited` says the clearance or a reading it sums changed
 * after that revision; `specThen` is the spec version it was judged on then, when it differs.
 */
export function changeSincePublished(
  current: Pick<ClearanceDto, 'result' | 'spec'>,
  then: ClearanceResult,
  revision: number,
  opts: { edited: boolean; specVersionThen: number | null },
): string | null {
  const now = current.result;
  const when = `when published (revision ${revision})`;
  if (!now) {
    return `cannot be worked out now; ${then.display}${then.verdict ? `, ${verdictWords[then.verdict]}` : ''} ${when}`;
  }
  const unit = now.unit;
  const uNow = formatUncertainty(now.expandedUncertaintyUm, unit);
  const uThen = formatUncertainty(then.expandedUncertaintyUm, unit);
  const finer = Math.min(now.expandedUncertaintyUm, then.expandedUncertaintyUm);
  const vNow = formatResult(micrometresToPicometres(now.valueUm), finer, unit).value;
  const vThen = formatResult(micrometresToPicometres(then.valueUm), finer, unit).value;

  const clauses: string[] = [];
  let dated = false;
  const at = () => {
    if (dated) return 'when published';
    dated = true;
    return when;
  };
  if (now.verdict !== then.verdict) {
    const spec =
      opts.specVersionThen !== null && current.spec && current.spec.version !== opts.specVersionThen
        ? ` (against spec v${current.spec.version} now, v${opts.specVersionThen} then)`
        : '';
    clauses.push(`${verdictText(now.verdict)} now; ${verdictText(then.verdict)} ${at()}${spec}`);
  }
  if (vNow !== vThen) {
    clauses.push(`The clearance is ${vNow} now, ${vThen} ${at()}${opts.edited ? ': a reading it sums, or the clearance, was edited since' : ''}`);
  }
  if (uNow !== uThen) {
    const cause = uncertaintyCause(now, then);
    clauses.push(`U is ${uNow} now, ${uThen} ${at()}${cause ? `: ${cause}` : opts.edited && vNow === vThen ? ': a reading it sums, or the clearance, was edited since' : ''}`);
  }
  return clauses.length ? clauses.join('. ') : null;
}
