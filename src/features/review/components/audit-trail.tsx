import { useInfiniteQuery } from '@tanstack/react-query';
import type { z } from 'zod';
import type { auditEntrySchema } from '@shared/review/review.schema';
import { EmptyState, ErrorState, LoadingState } from '@/components/ui/data-states';
import { LoadMore } from '@/components/ui/load-more';
import { reviewQueries } from '../api/review-queries';
import { clockTime, exactTime } from '../lib/review-format';
import { mediumDay } from '@/lib/dates';

type AuditEntry = z.infer<typeof auditEntrySchema>;

/** The day of a line in the viewer's time zone, as clockTime gives its time, so the sentence says only the time. */
const dayOf = mediumDay;

/** What the person did, as the middle of a sentence ("Dagny … at 10:42"). */
function deed(entry: AuditEntry, subject: string | null): string {
  const thing = subject ? `the ${entry.subjectType} “${subject}”` : `a ${entry.subjectType} no longer in the build`;
  const revision = typeof entry.after?.revision === 'number' ? ` as revision ${entry.after.revision}` : '';
  switch (entry.action) {
    case 'story.submit':
      return 'sent the story for review';
    case 'story.request-changes':
      return 'sent the story back for changes';
    case 'story.publish':
      return `published the story${revision}`;
    case 'story.withdraw':
      return 'withdrew the story from the public';
    case 'story.republish':
      return 'made the story public again';
    case 'review.claim':
      return 'took the story for review';
    case 'review.release':
      return 'let the story go';
    case 'check.checked':
      return `checked ${thing} against the footage`;
    case 'check.flagged':
      return `flagged ${thing}`;
    case 'check.answered':
      return `answered the flag on ${thing}`;
    default:
      return `did “${entry.action}” to ${entry.subjectType === 'story' ? 'the story' : thing}`;
  }
}

/** What the person wrote with the move: its reason, a flag's comment, an answer's text. */
function words(entry: AuditEntry): string {
  if (entry.note) return entry.note;
  const written = entry.action === 'check.answered' ? entry.after?.body : entry.action === 'check.flagged' ? entry.after?.comment : undefined;
  return typeof written === 'string' ? written : '';
}

/** A value of a before/after record in a few characters. */
function valueText(value: unknown): string {
  if (value === null || value === undefined) return '–';
  if (typeof value === 'string') return /^\d{4}-\d{2}-\d{2}T/.test(value) ? exactTime(value) : value;
  if (typeof value === 'number' || typeof value === 'boolean') return String(value);
  return JSON.stringify(value);
}

const blank = (value: unknown) => value === null || value === undefined || value === '';

/**
 * The stored record as fields, for an admin: "state: in-review → changes-requested" for every
 * field either side names; one that is empty on both sides is left out.
 */
function changes(entry: AuditEntry): { field: string; before: string | null; after: string }[] {
  const before = entry.before ?? {};
  const after = entry.after ?? {};
  const fields = [...new Set([...Object.keys(before), ...Object.keys(after)])];
  return fields
    .filter((field) => !(blank(before[field]) && blank(after[field])))
    .map((field) => {
      const was = field in before ? valueText(before[field]) : '–';
      const now = field in after ? valueText(after[field]) : '–';
      return { field, before: was === now ? null : was, after: now };
    });
}

/**
 * The story's audit trail, newest first, each line a sentence ("Dagny Orlov checked the reading
 * “Rotor height” against the footage at 10:42"). Subject names come from the review sheet. An
 * admin can open the stored record (the fields before and after) under each line.
 */
export function AuditTrail({
  storyId,
  subjectName,
  showRecord = false,
}: {
  storyId: number;
  subjectName: (type: string, id: number) => string | null;
  /** Offer the stored fields of each line (for admins). */
  showRecord?: boolean;
}) {
  const audit = useInfiniteQuery(reviewQueries.audit(storyId));
  if (audit.isPending) return <LoadingState label="Loading the record…" />;
  if (!audit.data) {
    return <ErrorState title="The record could not be loaded" error={audit.error} onRetry={() => void audit.refetch()} retrying={audit.isRefetching} />;
  }
  const items = audit.data.pages.flatMap((p) => p.items);
  if (items.length === 0) {
    return <EmptyState title="Nothing recorded yet">Sending, taking, checking, flagging and every workflow move are recorded here as they happen.</EmptyState>;
  }
  return (
    <div className="flex flex-col gap-2">
      <ol className="divide-y divide-rule text-sm" aria-label="Record of this story, newest first">
        {items.map((entry) => {
          const subject = entry.subjectType === 'story' ? null : subjectName(entry.subjectType, entry.subjectId);
          return (
            <li key={entry.id} className="grid gap-x-3 py-1.5 sm:grid-cols-[10.5rem_minmax(0,1fr)]" data-audit-action={entry.action}>
              <span className="figures text-xs text-ink-muted">{dayOf(entry.at)}</span>
              <div className="min-w-0">
                <p>
                  <span className="font-medium">{entry.actorName ?? 'Benchproof'}</span> {deed(entry, subject)} at{' '}
                  <time dateTime={entry.at} title={exactTime(entry.at)}>
                    {clockTime(entry.at)}
                  </time>
                  {words(entry) ? ':' : '.'}
                  {words(entry) && <span className="text-ink-muted"> “{words(entry)}”</span>}
                </p>
                {showRecord && changes(entry).length > 0 && (
                  <details className="text-xs text-ink-muted" data-audit-record="">
                    <summary className="cursor-pointer">Stored record</summary>
                    <ul className="figures mt-1 flex flex-wrap gap-x-4">
                      {changes(entry).map((c) => (
                        <li key={c.field} className="min-w-0 break-words">
                          {c.field}: {c.before !== null && <>{c.before} → </>}
                          <span className="text-ink">{c.after}</span>
                        </li>
                      ))}
                    </ul>
                  </details>
                )}
              </div>
            </li>
          );
        })}
      </ol>
      <LoadMore query={audit} shown={items.length} what="record lines" />
    </div>
  );
}
