import { useInfiniteQuery } from '@tanstack/react-query';
import type { z } from 'zod';
import type { auditEntrySchema } from '@shared/review/review.schema';
import { EmptyState, ErrorState, LoadingState } from '@/components/ui/data-states';
import { LoadMore } from '@/components/ui/load-more';
import { reviewQueries } from '../api/review-queries';
import { exactTime } from '../lib/review-format';

type AuditEntry = z.infer<typeof auditEntrySchema>;

const actionWords: Record<string, string> = {
  'story.submit': 'sent it for review',
  'story.request-changes': 'asked for changes',
  'story.publish': 'published it',
  'story.withdraw': 'withdrew it',
  'story.republish': 'made it public again',
  'review.claim': 'took it for review',
  'review.release': 'let it go',
  'check.checked': 'checked',
  'check.flagged': 'flagged',
  'check.answered': 'answered the flag on',
};

/** A value of a before/after record in a few characters. */
function valueText(value: unknown): string {
  if (value === null || value === undefined) return '–';
  if (typeof value === 'string') return /^\d{4}-\d{2}-\d{2}T/.test(value) ? exactTime(value) : value;
  if (typeof value === 'number' || typeof value === 'boolean') return String(value);
  return JSON.stringify(value);
}

const blank = (value: unknown) => value === null || value === undefined || value === '';

/**
 * "state: in-review → changes-requested" for every field either side names; a field that did
 * not change shows its one value, and one that is empty on both sides is left out.
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
 * The story's audit trail, newest first: who, when, what, and before → after. Subject names
 * come from the review sheet where the line is about one of the story's readings or clearances.
 */
export function AuditTrail({ storyId, subjectName }: { storyId: number; subjectName: (type: string, id: number) => string | null }) {
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
              <time dateTime={entry.at} className="figures text-xs text-ink-muted">
                {exactTime(entry.at)}
              </time>
              <div className="min-w-0">
                <p>
                  <span className="font-medium">{entry.actorName ?? 'The system'}</span> {actionWords[entry.action] ?? entry.action}
                  {subject && (
                    <>
                      {' '}
                      the {entry.subjectType} <q>{subject}</q>
                    </>
                  )}
                  {entry.note && <span className="text-ink-muted"> — “{entry.note}”</span>}
                </p>
                {changes(entry).length > 0 && (
                  <ul className="figures flex flex-wrap gap-x-4 text-xs text-ink-muted">
                    {changes(entry).map((c) => (
                      <li key={c.field} className="min-w-0 break-words">
                        {c.field}: {c.before !== null && <>{c.before} → </>}
                        <span className="text-ink">{c.after}</span>
                      </li>
                    ))}
                  </ul>
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
