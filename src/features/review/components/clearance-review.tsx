import type { EvidenceCheckDto } from '@shared/review/review.schema';
import type { ReviewSheet } from '@shared/review/review-sheet.schema';
import { ClearanceResultView, specSourceWords } from '@/features/clearances/components/clearance-result-view';
import { formulaLegend, modelText, specLine } from '@/features/clearances/lib/clearance-view';
import { WarningIcon } from '@/features/readings/components/reading-badges';
import { CitedChecksAndJudge } from './citing-sentences';
import { EvidenceStateBadge } from './evidence-state-badge';
import type { JudgeProps } from './judge-bar';
import { PublishedChange } from './published-change';
import { Fact } from './reading-review';

type SheetClearance = ReviewSheet['clearances'][number];

/**
 * One result laid out for checking: for a story published before, what differs from the
 * published judgement (first, so it is not missed); how it is worked out (a signed sum, or a
 * formula with what each of its names stands for); the readings it uses (each with where it
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
  const isFormula = clearance.formula !== null;
  const constants = formulaLegend(clearance).filter((l) => !l.reading);
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
          <span className="figures break-words" data-model="">
            {modelText(clearance)}
          </span>
        </Fact>
        <Fact term={isFormula ? 'Readings, by name' : 'Readings summed'}>
          <ul className="flex flex-col gap-1">
            {summed.map(({ term, entry }) => (
              <li key={term.readingId} className="flex flex-wrap items-center gap-2">
                {isFormula ? (
                  <span className="figures text-ink-muted">{term.symbol ?? term.readingKey} =</span>
                ) : (
                  <span className="figures w-3 text-center" aria-label={term.sign === 1 ? 'plus' : 'minus'}>
                    {term.sign === 1 ? '+' : '−'}
                  </span>
                )}
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
        {constants.length > 0 && (
          <Fact term="Constants">
            <ul className="flex flex-col gap-0.5">
              {constants.map((c) => (
                <li key={c.name} className="figures">
                  <span className="text-ink-muted">{c.name} =</span> {c.meaning}
                </li>
              ))}
            </ul>
          </Fact>
        )}
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

      {/* The budget laid open: which component carries the variance is what decides the method. */}
      {clearance.result ? (
        <ClearanceResultView result={clearance.result} readings={summed.flatMap(({ entry }) => (entry ? [entry.reading] : []))} budgetOpen noSpecText="No spec attached, so no verdict." />
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

