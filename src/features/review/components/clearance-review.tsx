import type { ClearanceResult } from '@shared/clearances/clearance.schema';
import { formatUncertainty } from '@shared/measure/format';
import { formatCoverageFactor } from '@shared/measure/format-quantity';
import { decisionRuleText } from '@shared/measure/spec';
import type { Reading } from '@shared/readings/reading.schema';
import type { EvidenceCheckDto } from '@shared/review/review.schema';
import type { ReviewSheet } from '@shared/review/review-sheet.schema';
import { BudgetTable } from '@/components/budget-table';
import { BandPicture } from '@/features/calc/components/band-picture';
import { CalcSteps } from '@/features/calc/components/calc-steps';
import { ClearanceVerdicts, specSourceWords, VerdictCaution } from '@/features/clearances/components/clearance-result-view';
import { CoverageLine } from '@/features/clearances/components/coverage-facts';
import { bandPictureProps, expressionOf, specLine } from '@/features/clearances/lib/clearance-view';
import { WarningIcon } from '@/features/readings/components/reading-badges';
import { CitedChecksAndJudge } from './citing-sentences';
import { EvidenceStateBadge } from './evidence-state-badge';
import type { JudgeProps } from './judge-bar';
import { PublishedChange } from './published-change';
import { Fact } from './reading-review';

type SheetClearance = ReviewSheet['clearances'][number];

/**
 * One clearance laid out for checking: for a story published before, what differs from the
 * published judgement (first, so it is not missed); the readings it sums (each with where it
 * stands in this review), the spec and its source, the worked-out figure with how its interval
 * was found, its verdict and band picture, its uncertainty budget, and the sentences that cite it.
 */
export function ClearanceReview({
  item,
  readings,
  checks,
  headingId,
  judge,
  onOpenReading,
}: {
  item: SheetClearance;
  readings: ReviewSheet['readings'];
  checks: readonly EvidenceCheckDto[];
  headingId: string;
  /** The moderator's buttons; left out for the builder, who answers flags instead. */
  judge?: JudgeProps;
  onOpenReading: (readingId: number) => void;
}) {
  const { clearance, citedIn, check, asPublished, change } = item;
  const summed = clearance.terms.map((t) => ({ term: t, entry: readings.find((r) => r.reading.id === t.readingId) }));
  return (
    <div className="flex flex-col gap-4" data-review-subject={`clearance:${clearance.key}`}>
      <header className="flex flex-wrap items-center gap-x-3 gap-y-1">
        <h2 id={headingId} className="text-lg font-semibold">
          <span className="sr-only">Clearance: </span>
          {clearance.name}
        </h2>
        <span className="figures text-sm text-ink-muted">{clearance.key}</span>
        <EvidenceStateBadge check={check} />
      </header>

      {asPublished && <PublishedChange asPublished={asPublished} change={change ?? null} now={clearance.result} />}

      <dl className="grid grid-cols-[max-content_minmax(0,1fr)] gap-x-4 gap-y-1 text-sm">
        <Fact term="Worked out as">
          <span className="figures">{expressionOf(clearance.terms)}</span>
        </Fact>
        <Fact term="Readings summed">
          <ul className="flex flex-col gap-1">
            {summed.map(({ term, entry }) => (
              <li key={term.readingId} className="flex flex-wrap items-center gap-2">
                <span className="figures w-3 text-center" aria-label={term.sign === 1 ? 'plus' : 'minus'}>
                  {term.sign === 1 ? '+' : '−'}
                </span>
                {entry ? (
                  <button type="button" className="text-left text-accent underline underline-offset-2" onClick={() => onOpenReading(term.readingId)}>
                    {term.readingName}
                  </button>
                ) : (
                  <span>{term.readingName}</span>
                )}
                {entry && <span className="figures text-xs">{entry.reading.result.display}</span>}
                {entry && <EvidenceStateBadge check={entry.check} />}
              </li>
            ))}
          </ul>
        </Fact>
        <Fact term="Spec">
          {clearance.spec ? (
            <span className="flex flex-col gap-0.5">
              <span>{specLine(clearance.spec)}</span>
              <span className="text-ink-muted">
                Source: {specSourceWords[clearance.spec.sourceKind] ?? clearance.spec.sourceKind}
                {clearance.spec.sourceText ? <> — {clearance.spec.sourceText}</> : null}
              </span>
              {!clearance.spec.sourceText.trim() && (
                <span className="inline-flex items-start gap-1 text-danger">
                  <WarningIcon />
                  cites no source, so it cannot be published
                </span>
              )}
              {clearance.spec.newerVersion !== null && (
                <span className="inline-flex items-start gap-1 text-verdict-undecided">
                  <WarningIcon />
                  version {clearance.spec.newerVersion} of this spec exists; this clearance is judged against v{clearance.spec.version}
                </span>
              )}
            </span>
          ) : (
            <span className="text-ink-muted">none attached, so no verdict</span>
          )}
        </Fact>
        {clearance.note && (
          <Fact term="Note">
            <span className="whitespace-pre-line">{clearance.note}</span>
          </Fact>
        )}
      </dl>

      {clearance.result ? (
        <ClearanceFigures result={clearance.result} readings={summed.flatMap(({ entry }) => (entry ? [entry.reading] : []))} />
      ) : (
        <div role="note" className="rounded-md border border-danger/50 bg-danger-wash/50 px-3 py-2 text-sm">
          <p className="font-medium">It cannot be worked out:</p>
          <ul className="list-disc pl-5">
            {clearance.problems.map((p) => (
              <li key={p}>{p}</li>
            ))}
          </ul>
        </div>
      )}

      <CitedChecksAndJudge headingId={headingId} citedIn={citedIn} checks={checks} judge={judge} />
    </div>
  );
}

/**
 * The worked-out figure for a moderator: value ± U, u_c and k, the interval with its method and
 * the probability within spec, the verdict with its rule, the band picture, the budget laid open
 * (which component carries the variance is what decides the method), and the working.
 */
function ClearanceFigures({ result, readings }: { result: ClearanceResult; readings: readonly Pick<Reading, 'unit' | 'result'>[] }) {
  const picture = bandPictureProps(result, readings);
  return (
    <div className="flex flex-col gap-3" data-clearance-result="">
      <dl className="grid gap-x-4 gap-y-0.5 text-sm sm:grid-cols-[max-content_minmax(0,1fr)] sm:gap-y-1">
        <dt className="text-ink-muted">Clearance ± U</dt>
        <dd className="figures text-base font-semibold">{result.display}</dd>
        <dt className="text-ink-muted">Standard uncertainty u_c</dt>
        <dd className="figures">{formatUncertainty(result.standardUncertaintyUm, result.unit)}</dd>
        <dt className="text-ink-muted">Expanded U (k = {formatCoverageFactor(result.coverageFactor)})</dt>
        <dd className="figures">± {formatUncertainty(result.expandedUncertaintyUm, result.unit)}</dd>
      </dl>
      <CoverageLine facts={result} />
      {result.verdict && result.rule ? (
        <>
          <ClearanceVerdicts result={result} />
          <p className="max-w-prose text-xs text-ink-muted">{decisionRuleText[result.rule]}</p>
        </>
      ) : (
        <p className="text-sm text-ink-muted">No spec attached, so no verdict.</p>
      )}
      {picture && (
        <div className="max-w-xl">
          <BandPicture {...picture} />
        </div>
      )}
      {result.verdict && <VerdictCaution />}
      {result.budget && (
        <section aria-labelledby="review-budget-heading" className="flex flex-col gap-1.5" data-budget="">
          <h3 id="review-budget-heading" className="text-sm font-semibold">
            Uncertainty budget
          </h3>
          <BudgetTable budget={result.budget} unit={result.unit} />
        </section>
      )}
      <details className="rounded-md border border-rule px-3 py-2">
        <summary className="cursor-pointer text-sm font-medium">How it was worked out ({result.steps.length} steps)</summary>
        <div className="mt-2">
          <CalcSteps steps={result.steps} />
        </div>
      </details>
    </div>
  );
}
