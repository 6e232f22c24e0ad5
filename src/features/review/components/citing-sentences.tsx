import type { EvidenceCheckDto } from '@shared/review/review.schema';
import { JudgeBar, SubjectChecks, type JudgeProps } from './judge-bar';
import type { z } from 'zod';
import type { citingSentenceSchema } from '@shared/review/review-sheet.schema';
import { WarningIcon } from '@/features/readings/components/reading-badges';

type Sentence = z.infer<typeof citingSentenceSchema>;

/** The story's sentences that cite a reading or clearance, each with whether its words agree with the figure. */
export function CitingSentences({ sentences }: { sentences: readonly Sentence[] }) {
  if (sentences.length === 0) {
    return <p className="text-sm text-ink-muted">No sentence cites it directly (it is used through a clearance the story cites).</p>;
  }
  return (
    <ul className="flex flex-col gap-1.5" aria-label="Sentences that cite it">
      {sentences.map((s, i) => (
        <li key={`${s.line}-${i}`} className="text-sm" data-claim-status={s.status.state}>
          <span className="figures mr-1.5 text-xs text-ink-muted">line {s.line}</span>
          <q className="font-serif">{s.text}</q>
          {s.status.state === 'ok' ? (
            <span className="ml-2 inline-flex items-center gap-1 text-xs text-ink-muted">
              <svg viewBox="0 0 16 16" className="size-3.5" aria-hidden="true">
                <path d="M3 8.5l3.2 3L13 4.5" fill="none" stroke="currentColor" strokeWidth="1.8" strokeLinecap="round" strokeLinejoin="round" />
              </svg>
              the words agree with the figure
            </span>
          ) : (
            <span className="mt-0.5 flex items-start gap-1 text-xs text-danger">
              <WarningIcon />
              {s.status.message}
            </span>
          )}
        </li>
      ))}
    </ul>
  );
}

/**
 * The foot of a reading's or a clearance's review panel: the sentences that cite it, its checks
 * with the builder's answers, and (for a moderator) the buttons to judge it.
 */
export function CitedChecksAndJudge({
  headingId,
  citedIn,
  checks,
  judge,
}: {
  headingId: string;
  citedIn: readonly Sentence[];
  checks: readonly EvidenceCheckDto[];
  judge?: JudgeProps | null;
}) {
  return (
    <>
      <section aria-labelledby={`${headingId}-cited`} className="flex flex-col gap-1">
        <h3 id={`${headingId}-cited`} className="text-sm font-semibold">
          Where the story cites it
        </h3>
        <CitingSentences sentences={citedIn} />
      </section>

      <section aria-labelledby={`${headingId}-checks`} className="flex flex-col gap-1">
        <h3 id={`${headingId}-checks`} className="text-sm font-semibold">
          Checks and answers
        </h3>
        <SubjectChecks checks={checks} />
      </section>

      {judge && <JudgeBar {...judge} />}
    </>
  );
}
