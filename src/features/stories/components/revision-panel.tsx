import { useInfiniteQuery } from '@tanstack/react-query';
import { Badge } from '@/components/ui/badge';
import { Button } from '@/components/ui/button';
import { EmptyState, ErrorState, LoadingState } from '@/components/ui/data-states';
import { LoadMore } from '@/components/ui/load-more';
import { Panel } from '@/components/ui/panel';
import { errorMessage } from '@/lib/api';
import { storyQueries } from '../api/story-queries';
import { savedTime } from './save-status';

export interface RevisionPanelProps {
  storyId: number;
  /** The revision shown in the preview, if any. */
  viewing: number | null;
  onView: (number: number) => void;
  onKeep: () => void;
  keeping: boolean;
  keepError: unknown;
}

/** The entry's kept states, newest first: view one in the preview, keep the current one. */
export function RevisionPanel({ storyId, viewing, onView, onKeep, keeping, keepError }: RevisionPanelProps) {
  const revisions = useInfiniteQuery(storyQueries.revisions(storyId));
  const items = revisions.data?.pages.flatMap((page) => page.items) ?? [];

  let body;
  if (revisions.isPending) body = <LoadingState label="Loading the revisions…" className="py-2" />;
  else if (!revisions.data)
    body = <ErrorState title="The revisions could not be loaded" error={revisions.error} onRetry={() => void revisions.refetch()} retrying={revisions.isRefetching} />;
  else if (items.length === 0)
    body = (
      <EmptyState title="No revisions yet">
        Autosave keeps a revision every few minutes while you write. Press “Keep this version” to keep the text as it is now, say before a big rewrite.
      </EmptyState>
    );
  else
    body = (
      <div className="flex flex-col gap-2">
        <ol aria-label="Revisions, newest first" className="flex max-h-80 flex-col divide-y divide-rule overflow-auto rounded-md border border-rule">
          {items.map((rev) => (
            <li key={rev.number} className="flex flex-wrap items-center justify-between gap-2 px-3 py-1.5 text-sm" aria-current={rev.number === viewing || undefined}>
              <span className="flex flex-wrap items-center gap-2">
                <span className="figures font-medium">No. {rev.number}</span>
                <Badge tone={rev.reason === 'kept' ? 'strong' : 'neutral'}>{rev.reason === 'kept' ? 'kept' : 'autosave'}</Badge>
                <span className="text-ink-muted">
                  {rev.savedByName} · <time dateTime={rev.createdAt}>{savedTime(rev.createdAt)}</time>
                </span>
              </span>
              <Button size="sm" variant={rev.number === viewing ? 'primary' : 'secondary'} onClick={() => onView(rev.number)} aria-pressed={rev.number === viewing}>
                {rev.number === viewing ? 'Shown in preview' : 'View'}
                <span className="sr-only"> revision {rev.number}</span>
              </Button>
            </li>
          ))}
        </ol>
        {(revisions.hasNextPage || revisions.isFetchNextPageError) && <LoadMore query={revisions} shown={items.length} what="revisions" />}
      </div>
    );

  return (
    <Panel
      title="Revision history"
      description="Earlier states of this entry. Viewing one never changes your text until you restore it."
      actions={
        <Button size="sm" onClick={onKeep} loading={keeping} loadingText="Keeping…">
          Keep this version
        </Button>
      }
    >
      {keepError != null && (
        <p role="alert" className="mb-2 text-sm text-danger">
          Not kept: {errorMessage(keepError)}
        </p>
      )}
      {body}
    </Panel>
  );
}
