import { clearanceResultSchema, type Clearance as ClearanceDto, type ClearanceResult } from '@shared/clearances/clearance.schema';
import { resultFigures } from '@shared/clearances/result-figures';
import { formatResult, formatUncertainty } from '@shared/measure/format';
import { formatCoverageFactor, formatUncertaintyIn, formatValue, plainNumber, uncertaintyDecimals } from '@shared/measure/format-quantity';
import { convertNumber, quantityOf } from '@shared/measure/quantities';
import { verdictWords, type Verdict } from '@shared/measure/spec';
import { isLengthUnit, micrometresToPicometres } from '@shared/measure/units';
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

/** What the sheet shows of the published judgement: µm figures for a length, and the figures in the result's own unit. */
export function asPublished(result: ClearanceResult, revision: number): AsPublished {
  const figures = resultFigures(result);
  return {
    revision,
    verdict: result.verdict,
    display: result.display,
    valueUm: result.valueUm,
    expandedUncertaintyUm: result.expandedUncertaintyUm,
    method: result.method ?? null,
    quantity: figures.quantity,
    unit: result.unit,
    value: figures.value,
    expandedUncertainty: figures.expandedUncertainty,
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
  const shown = shownFigures(now, then);
  if (!shown) {
    // A result that measures something else now than then (its formula changed): say both as judged.
    const verdicts = now.verdict !== then.verdict ? `${verdictText(now.verdict)} now; ${verdictText(then.verdict)} ${when}. ` : '';
    return `${verdicts}The result is ${now.display} now, ${then.display} ${verdicts ? 'when published' : when}${opts.edited ? ': a reading it uses, or the result, was edited since' : ''}`;
  }
  const { vNow, vThen, uNow, uThen, what, readingWord } = shown;

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
    clauses.push(`${what} is ${vNow} now, ${vThen} ${at()}${opts.edited ? `: ${readingWord}, was edited since` : ''}`);
  }
  if (uNow !== uThen) {
    const cause = uncertaintyCause(now, then);
    clauses.push(`U is ${uNow} now, ${uThen} ${at()}${cause ? `: ${cause}` : opts.edited && vNow === vThen ? `: ${readingWord}, was edited since` : ''}`);
  }
  return clauses.length ? clauses.join('. ') : null;
}

/**
 * The value and U of both results as the sheet shows them, in today's unit: a length by its µm
 * figures (the value at the finer of the two U's places, U to two significant digits), any other
 * quantity by its figures in its unit (`resultFigures`), the published ones converted when the
 * unit changed since. Null when the two are not of one quantity.
 */
function shownFigures(now: ClearanceResult, then: ClearanceResult): { vNow: string; vThen: string; uNow: string; uThen: string; what: string; readingWord: string } | null {
  const unit = now.unit;
  // A result without `quantity` was judged before other quantities could be stored: a length.
  const lengths = (now.quantity ?? 'length') === 'length' && (then.quantity ?? 'length') === 'length';
  if (lengths && isLengthUnit(unit) && now.valueUm !== null && then.valueUm !== null) {
    const eNow = now.expandedUncertaintyUm ?? 0;
    const eThen = then.expandedUncertaintyUm ?? 0;
    const finer = Math.min(eNow, eThen);
    return {
      uNow: formatUncertainty(eNow, unit),
      uThen: formatUncertainty(eThen, unit),
      vNow: formatResult(micrometresToPicometres(now.valueUm), finer, unit).value,
      vThen: formatResult(micrometresToPicometres(then.valueUm), finer, unit).value,
      what: 'The clearance',
      readingWord: 'a reading it sums, or the clearance',
    };
  }
  const fNow = resultFigures(now);
  const fThen = resultFigures(then);
  if (quantityOf(then.unit) !== quantityOf(unit)) return null;
  const thenValue = then.unit === unit ? fThen.value : convertNumber(fThen.value, then.unit, unit);
  const thenU = then.unit === unit ? fThen.expandedUncertainty : convertNumber(fThen.expandedUncertainty, then.unit, unit, { difference: true });
  const finer = Math.min(fNow.expandedUncertainty, thenU);
  const places = finer > 0 ? uncertaintyDecimals(finer) : 6;
  return {
    uNow: formatUncertaintyIn(fNow.expandedUncertainty, unit),
    uThen: formatUncertaintyIn(thenU, unit),
    vNow: formatValue(fNow.value, unit, places),
    vThen: formatValue(thenValue, unit, places),
    what: 'The result',
    readingWord: 'a reading it uses, or the result',
  };
}
