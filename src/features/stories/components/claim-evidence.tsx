import { formatCoverageFactor } from '@shared/measure/format-quantity';
import { Link } from 'react-router-dom';
import type { Clearance } from '@shared/clearances/clearance.schema';
import type { Reading } from '@shared/readings/reading.schema';
import type { ClaimKind, ClaimStatus, ClaimTarget } from '@shared/stories/claims';
import { VerdictBadge } from '@/components/ui/badge';
import { endInUnit, intervalOf } from '@/features/clearances/components/coverage-facts';
import { formulaLegend, isLengthResult } from '@/features/clearances/lib/clearance-view';
import { estimateText } from '@/features/readings/lib/reading-text';
import { formatTime } from '@/features/clips/lib/clip-format';
import { CoverageRows, hasCoverageRows, ReaderBudget, ReaderWarnings } from '@/features/public/components/uncertainty-evidence';

export interface EvidenceLookup {
  buildId: number;
  readings: readonly Reading[];
  clearances: readonly Clearance[];
}

const reviewWords: Record<Reading['reviewState'], string> = {
  unchecked: 'not checked by a moderator yet',
  checked: 'checked by a moderator against the footage',
  flagged: 'flagged by a moderator',
};

/** Where a reading's moment opens in the build workspace. */
export function momentPath(buildId: number, reading: Pick<Reading, 'clipId' | 'momentId'>): string {
  return `/builds/${buildId}?clip=${reading.clipId}&moment=${reading.momentId}`;
}

/** How a claim stands, in a sentence, for the panel and the popover. */
export function claimStatusText(status: ClaimStatus): string | null {
  return status.state === 'ok' ? null : status.message;
}

/**
 * The evidence behind one claim: the figure with its expanded uncertainty, the verdict with its
 * rule and spec, and each reading with its instrument, evidence still and a link to its moment.
 */
export function ClaimEvidence({
  kind,
  claimKey,
  status,
  target,
  lookup,
  headingId,
}: {
  kind: ClaimKind;
  claimKey: string;
  status: ClaimStatus | null;
  target: ClaimTarget | null;
  lookup: EvidenceLookup;
  headingId?: string;
}) {
  const clearance = kind === 'clearance' ? (lookup.clearances.find((c) => c.key === claimKey) ?? null) : null;
  const reading = kind === 'reading' ? (lookup.readings.find((r) => r.key === claimKey) ?? null) : null;
  const termReadings = clearance
    ? clearance.terms.map((term) => ({ term, reading: lookup.readings.find((r) => r.id === term.readingId) ?? null }))
    : reading
      ? [{ term: null, reading }]
      : [];
  const problem = status ? claimStatusText(status) : null;

  return (
    <div className="flex flex-col gap-3 text-sm">
      <div>
        <p className="text-xs font-medium tracking-wide text-ink-muted uppercase">
          {kind === 'clearance' ? 'Clearance' : 'Reading'} · <span className="figures normal-case">{claimKey}</span>
        </p>
        <h3 id={headingId} className="text-md font-semibold">
          {target?.name ?? clearance?.name ?? reading?.name ?? 'Not found in this build'}
        </h3>
      </div>

      {problem && (
        <p className="flex items-start gap-1.5 rounded-md border border-danger/50 bg-danger-wash/60 px-2.5 py-1.5 text-ink">
          <WarnIcon />
          <span>{problem}</span>
        </p>
      )}

      {target ? (
        <p className="figures text-base font-medium" data-target-display="">
          {target.display}
        </p>
      ) : clearance && clearance.problems.length > 0 ? (
        <p className="text-ink-muted">It cannot be worked out yet: {clearance.problems.join(' ')}</p>
      ) : (
        !clearance &&
        !reading && (
          <p className="text-ink-muted">
            Check the key against the {kind === 'clearance' ? 'clearances' : 'readings'} in the build workspace, or pick the evidence with “Claim”.
          </p>
        )
      )}

      {clearance?.formula && (
        <p className="text-xs text-ink-muted" data-formula="">
          = <span className="figures break-words text-ink">{clearance.formula}</span>
          {formulaLegend(clearance)
            .filter((l) => !l.reading)
            .map((l) => (
              <span key={l.name} className="block">
                with <span className="figures text-ink">{l.name}</span> = <span className="figures">{l.meaning}</span>
              </span>
            ))}
        </p>
      )}
      {clearance?.result?.verdict && clearance.result.rule && (
        <div className="flex flex-col gap-1">
          <VerdictBadge verdict={clearance.result.verdict} rule={`${clearance.result.rule} rule, k = ${formatCoverageFactor(clearance.result.coverageFactor)}`} size="sm" />
          {clearance.spec && (
            <p className="text-xs text-ink-muted">
              Spec: {clearance.spec.name}, version {clearance.spec.version} · {clearance.spec.sourceText}
              {clearance.spec.newerVersion !== null && ` · version ${clearance.spec.newerVersion} is newer`}
            </p>
          )}
        </div>
      )}
      {clearance && clearance.result && !clearance.result.verdict && <p className="text-xs text-ink-muted">No spec attached, so no verdict.</p>}
      {clearance?.result && <ResultFacts result={clearance.result} formula={clearance.formula} />}
      {reading && <p className="text-xs text-ink-muted">A reading on its own has no verdict; clearances worked out from it do.</p>}

      {termReadings.length > 0 && (
        <div>
          <h4 className="mb-1 text-xs font-semibold tracking-wide text-ink-muted uppercase">{termReadings.length === 1 ? 'Reading' : 'Readings'}</h4>
          <ul className="flex flex-col gap-2">
            {termReadings.map(({ term, reading: r }, index) => (
              <li key={term?.readingId ?? r?.id ?? index} className="flex gap-2.5">
                {r ? (
                  <>
                    <img src={r.frameUrl} alt={`Evidence still of ${r.name} at ${formatTime(r.atMs / 1000)} in ${r.clipTitle}`} className="h-16 w-28 shrink-0 rounded-sm border border-rule bg-paper-2 object-cover" loading="lazy" />
                    <div className="min-w-0">
                      <p className="font-medium">
                        {term && <span className="figures mr-1 text-ink-muted">{clearance?.formula ? `${term.symbol ?? term.readingKey} =` : term.sign === 1 ? '+' : '−'}</span>}
                        {r.name} <span className="figures text-xs text-ink-muted">{r.key}</span>
                      </p>
                      <p className="figures text-xs">{estimateText(r)}</p>
                      <p className="text-xs text-ink-muted">
                        {r.instrumentName} · {r.takenOn} · {reviewWords[r.reviewState]}
                      </p>
                      <Link to={momentPath(lookup.buildId, r)} target="_blank" rel="noopener" className="text-xs">
                        Open the moment at {formatTime(r.atMs / 1000)} in “{r.clipTitle}”<span className="sr-only"> (opens in a new tab)</span> ↗
                      </Link>
                    </div>
                  </>
                ) : (
                  <p className="text-ink-muted">
                    {clearance?.formula ? `${term?.symbol ?? term?.readingKey} = ` : term?.sign === -1 ? '− ' : '+ '}
                    {term?.readingName} ({term?.readingKey}): this reading is not in the list any more.
                  </p>
                )}
              </li>
            ))}
          </ul>
        </div>
      )}
    </div>
  );
}

/**
 * The interval, the method, the probability within spec, the warnings and the budget of a cited
 * result, in the words readers will see under the verdict and in the builder's own unit: a length
 * by its µm figures (as always), any other quantity by its figures in its own unit.
 */
function ResultFacts({ result, formula }: { result: NonNullable<Clearance['result']>; formula: string | null }) {
  const noun = isLengthResult(result) && formula === null ? 'clearance' : 'result';
  const interval = intervalOf(result);
  return (
    <>
      {hasCoverageRows(result, interval) && (
        <dl className="flex flex-col gap-0.5 [&_dd]:mb-1.5" data-coverage="">
          <CoverageRows facts={result} end={endInUnit(result)} interval={interval} noun={noun} />
        </dl>
      )}
      <ReaderWarnings facts={result} />
      <ReaderBudget facts={result} noun={noun} />
    </>
  );
}

export function WarnIcon({ className = 'mt-0.5 size-3.5 shrink-0 text-danger' }: { className?: string }) {
  return (
    <svg viewBox="0 0 16 16" className={className} aria-hidden="true">
      <path d="M8 1.5 15 14.5H1z" fill="none" stroke="currentColor" strokeWidth="1.5" strokeLinejoin="round" />
      <path d="M8 6v4M8 11.6v.8" stroke="currentColor" strokeWidth="1.5" strokeLinecap="round" />
    </svg>
  );
}

/** The claim mark of the story text (a ring with cross hairs), for buttons and lists. */
export function ClaimMark({ className = 'size-3.5 shrink-0 text-accent' }: { className?: string }) {
  return (
    <svg viewBox="0 0 16 16" className={className} aria-hidden="true">
      <circle cx="8" cy="8" r="4.6" fill="none" stroke="currentColor" strokeWidth="1.8" />
      <path d="M8 0.5v4M8 11.5v4M0.5 8h4M11.5 8h4" stroke="currentColor" strokeWidth="1.8" />
    </svg>
  );
}
