import type { ClearanceResult } from '@shared/clearances/clearance.schema';
import type { AsPublished } from '@shared/review/review-sheet.schema';
import { VerdictBadge } from '@/components/ui/badge';
import { cn } from '@/lib/cn';

/** Two arrows passing: the figure differs from the one published. An equals sign: it is the same. */
export function PublishedChangeGlyph({ changed, className }: { changed: boolean; className?: string }) {
  return (
    <svg viewBox="0 0 16 16" className={cn('size-3.5 shrink-0', className)} aria-hidden="true">
      {changed ? (
        <path d="M2 5.5h10.5M10 3l2.5 2.5L10 8M14 10.5H3.5M6 8l-2.5 2.5L6 13" fill="none" stroke="currentColor" strokeWidth="1.5" strokeLinecap="round" strokeLinejoin="round" />
      ) : (
        <path d="M3 6h10M3 10h10" fill="none" stroke="currentColor" strokeWidth="1.5" strokeLinecap="round" />
      )}
    </svg>
  );
}

/** How the published interval was found, from the method it recorded (none before the field existed). */
function publishedMethodWords(method: AsPublished['method']): string {
  if (method === 'monte-carlo') return 'interval from a Monte Carlo run (JCGM 101)';
  if (method === 'gum') return 'interval from the GUM';
  return 'judged by the earlier engine, with the fixed k shown';
}

const sentence = (text: string) => `${text.charAt(0).toUpperCase()}${text.slice(1)}${/[.!?]$/.test(text) ? '' : '.'}`;

/**
 * A cited clearance beside the same clearance as the story's current publication judged it: for a
 * story going round again. When the verdict or the figures differ the moderator sees it first, as
 * a mark and words with both figures; when they are the same, one quiet line says so.
 */
export function PublishedChange({ asPublished, change, now }: { asPublished: AsPublished; change: string | null; now: ClearanceResult | null }) {
  if (!change) {
    return (
      <p className="inline-flex items-center gap-1.5 text-sm text-ink-muted" data-published-change="same">
        <PublishedChangeGlyph changed={false} />
        <span>
          Same figure and verdict as published in revision {asPublished.revision}: <span className="figures">{asPublished.display}</span>
        </span>
      </p>
    );
  }
  const headingId = `published-change-${asPublished.revision}`;
  return (
    <section
      aria-labelledby={headingId}
      data-published-change="changed"
      className="flex flex-col gap-2 rounded-md border-2 border-verdict-undecided/60 bg-paper-2/60 px-3 py-2.5 text-sm"
    >
      <h3 id={headingId} className="inline-flex items-center gap-1.5 font-semibold text-verdict-undecided">
        <PublishedChangeGlyph changed className="size-4" />
        Differs from the published revision {asPublished.revision}
      </h3>
      <p className="max-w-prose" data-change-text="">
        {sentence(change)}
      </p>
      <dl className="grid grid-cols-[max-content_minmax(0,1fr)] gap-x-4 gap-y-1">
        <dt className="text-ink-muted">Now</dt>
        <dd className="flex flex-wrap items-center gap-x-2 gap-y-1">
          {now ? (
            <>
              <span className="figures">{now.display}</span>
              {now.verdict ? <VerdictBadge verdict={now.verdict} size="sm" /> : <span className="text-ink-muted">no verdict</span>}
            </>
          ) : (
            <span>cannot be worked out</span>
          )}
        </dd>
        <dt className="text-ink-muted">Published (revision {asPublished.revision})</dt>
        <dd className="flex flex-wrap items-center gap-x-2 gap-y-1" data-as-published="">
          <span className="figures">{asPublished.display}</span>
          {asPublished.verdict ? <VerdictBadge verdict={asPublished.verdict} size="sm" /> : <span className="text-ink-muted">no verdict</span>}
          <span className="text-xs text-ink-muted">{publishedMethodWords(asPublished.method)}</span>
        </dd>
      </dl>
      <p className="text-xs text-ink-muted">
        Revision {asPublished.revision} keeps the figures as they were judged; publishing this revision shows the figure worked out now instead.
      </p>
    </section>
  );
}
