import { useId } from 'react';
import { formatCoverageFactor, formatUncertaintyIn } from '@shared/measure/format-quantity';
import type { ClearanceResult } from '@shared/clearances/clearance.schema';
import { resultFigures } from '@shared/clearances/result-figures';
import type { Reading } from '@shared/readings/reading.schema';
import { formatUncertainty } from '@shared/measure/format';
import { decisionRuleText, type Verdict } from '@shared/measure/spec';
import { BudgetTable } from '@/components/budget-table';
import { VerdictBadge } from '@/components/ui/badge';
import { BandPicture, ResultBandPicture } from '@/features/calc/components/band-picture';
import { CalcSteps } from '@/features/calc/components/calc-steps';
import { cn } from '@/lib/cn';
import { bandPictureProps, isLengthResult, resultBandPictureProps } from '../lib/clearance-view';
import { BudgetDisclosure, CoverageLine } from './coverage-facts';

const preferredWords: Record<Verdict, string> = {
  conforms: 'Within the preferred band',
  'does-not-conform': 'Outside the preferred band',
  undecided: 'Too close to call against the preferred band',
};

const rejectWords: Record<Verdict, string> = {
  conforms: 'Clear of the reject limit',
  'does-not-conform': 'Past the reject limit',
  undecided: 'Too close to call against the reject limit',
};

/** Where spec figures come from, in words. */
export const specSourceWords: Record<string, string> = {
  manual: 'manufacturer’s manual',
  standard: 'published standard',
  'common-practice': 'common practice (no published source)',
};

/** The verdict, the rule it was judged by, and the preferred-band and reject-limit verdicts. */
export function ClearanceVerdicts({ result, size = 'md' }: { result: ClearanceResult; size?: 'sm' | 'md' }) {
  if (!result.verdict || !result.rule) return <span className="text-sm text-ink-muted">no spec, no verdict</span>;
  return (
    <span className="inline-flex flex-wrap items-center gap-1.5">
      <VerdictBadge verdict={result.verdict} rule={`${result.rule} rule, k = ${formatCoverageFactor(result.coverageFactor)}`} size={size} />
      {result.preferredVerdict && (
        <VerdictBadge verdict={result.preferredVerdict} size="sm">
          {preferredWords[result.preferredVerdict]}
        </VerdictBadge>
      )}
      {result.rejectVerdict && (
        <VerdictBadge verdict={result.rejectVerdict} size="sm">
          {rejectWords[result.rejectVerdict]}
        </VerdictBadge>
      )}
    </span>
  );
}

/** The caution every verdict carries. */
export function VerdictCaution({ className }: { className?: string }) {
  return (
    <p className={cn('text-xs text-ink-muted', className)}>
      These are the builder’s own figures. Follow the manufacturer’s manual, local rules and qualified practice before relying on
      them; engine and machining work can hurt people.
    </p>
  );
}

/**
 * A worked-out result in full: value, u_c and U, the interval with its method and the probability
 * within spec, the verdict with its rule in words, the band picture, and the budget and the engine's
 * working in disclosures. A length goes by its µm figures (as it always has); any other quantity
 * (a compression ratio, a volume, an angle) by its figures in its own unit.
 */
export function ClearanceResultView({
  result,
  readings = [],
  stepsOpen = false,
  budgetOpen = false,
  noSpecText = 'No spec attached, so no verdict: attach a spec version to judge it.',
}: {
  result: ClearanceResult;
  /** The readings it is made from, so the band picture's scale shows their places. */
  readings?: readonly Pick<Reading, 'unit' | 'result'>[];
  stepsOpen?: boolean;
  /** The budget laid open under a heading (the moderator's view) instead of behind a disclosure. */
  budgetOpen?: boolean;
  noSpecText?: string;
}) {
  const length = isLengthResult(result);
  const picture = length ? bandPictureProps(result, readings) : null;
  const anyPicture = length ? null : resultBandPictureProps(result, readings);
  const figures = resultFigures(result);
  const budgetId = useId();
  return (
    <div className="flex flex-col gap-3" data-clearance-result="" data-quantity={result.quantity}>
      <dl className="grid gap-x-4 gap-y-0.5 text-sm sm:grid-cols-[max-content_minmax(0,1fr)] sm:gap-y-1">
        <dt className="text-ink-muted">{length ? 'Clearance ± U' : 'Result ± U'}</dt>
        <dd className="figures text-base font-semibold" data-result-display="">
          {result.display}
        </dd>
        <dt className="text-ink-muted">Standard uncertainty u_c</dt>
        <dd className="figures">
          {length ? formatUncertainty(result.standardUncertaintyUm ?? 0, result.unit) : formatUncertaintyIn(figures.standardUncertainty, result.unit)}
        </dd>
        <dt className="text-ink-muted">Expanded U (k = {formatCoverageFactor(result.coverageFactor)})</dt>
        <dd className="figures">± {length ? formatUncertainty(result.expandedUncertaintyUm, result.unit) : formatUncertaintyIn(figures.expandedUncertainty, result.unit)}</dd>
      </dl>
      <CoverageLine facts={result} />
      {result.verdict && result.rule ? (
        <>
          <ClearanceVerdicts result={result} />
          <p className="max-w-prose text-xs text-ink-muted">{decisionRuleText[result.rule]}</p>
        </>
      ) : (
        <p className="text-sm text-ink-muted">{noSpecText}</p>
      )}
      {picture && (
        <div className="max-w-xl">
          <BandPicture {...picture} />
        </div>
      )}
      {anyPicture && (
        <div className="max-w-xl">
          <ResultBandPicture {...anyPicture} />
        </div>
      )}
      {result.verdict && <VerdictCaution />}
      {budgetOpen && result.budget ? (
        <section aria-labelledby={`budget-${budgetId}`} className="flex flex-col gap-1.5" data-budget="">
          <h3 id={`budget-${budgetId}`} className="text-sm font-semibold">
            Uncertainty budget
          </h3>
          <BudgetTable budget={result.budget} unit={result.unit} />
        </section>
      ) : (
        <BudgetDisclosure facts={result} />
      )}
      <details open={stepsOpen} className="rounded-md border border-rule px-3 py-2">
        <summary className="cursor-pointer text-sm font-medium">How it was worked out ({result.steps.length} steps)</summary>
        <div className="mt-2">
          <CalcSteps steps={result.steps} />
        </div>
      </details>
    </div>
  );
}
