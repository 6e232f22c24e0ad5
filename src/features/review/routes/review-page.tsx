import { useState } from 'react';
import { useInfiniteQuery, useQuery } from '@tanstack/react-query';
import type { LoaderFunctionArgs } from 'react-router-dom';
import { requireArea } from '@/features/auth/lib/require-role';
import { authQueries } from '@/features/auth/api/auth-queries';
import { Button } from '@/components/ui/button';
import { EmptyState, ErrorState, LoadingState } from '@/components/ui/data-states';
import { LoadMore } from '@/components/ui/load-more';
import { PageHeader } from '@/components/ui/page-header';
import { queryClient } from '@/lib/query-client';
import { reviewQueries } from '../api/review-queries';
import { QueueList } from '../components/queue-list';
import { useNow } from '../lib/use-now';

export async function loader({ request }: LoaderFunctionArgs) {
  await requireArea('review', request);
  void queryClient.prefetchInfiniteQuery(reviewQueries.queue());
  return null;
}

/** /review — stories waiting for a moderator, oldest sent first. */
export function Component() {
  const queue = useInfiniteQuery(reviewQueries.queue());
  const me = useQuery(authQueries.me());
  const now = useNow();
  // A manual refresh also clears what the rows said about earlier attempts to take a story.
  const [round, setRound] = useState(0);

  return (
    <>
      <PageHeader
        title="Review queue"
        description="Stories waiting for a moderator to check their readings against the footage, oldest sent first. Take one to hold it for 30 minutes while you check it."
        actions={
          <Button variant="secondary" size="sm" onClick={() => {
              setRound((r) => r + 1);
              void queue.refetch();
            }}
            loading={queue.isRefetching && !queue.isFetchingNextPage} loadingText="Refreshing…">
            Refresh
          </Button>
        }
      />
      {queue.isPending ? (
        <LoadingState label="Loading the stories waiting for review…" />
      ) : !queue.data ? (
        <ErrorState title="The review queue could not be loaded" error={queue.error} onRetry={() => void queue.refetch()} retrying={queue.isRefetching} />
      ) : queue.data.pages[0]?.items.length === 0 ? (
        <EmptyState title="Nothing waiting for review">
          No story is in review right now. When a builder sends one, it appears here and every moderator gets an e-mail. Press Refresh to look
          again.
        </EmptyState>
      ) : (
        <div className="flex flex-col gap-3">
          <QueueList key={round} items={queue.data.pages.flatMap((p) => p.items)} meId={me.data?.id} now={now} />
          <LoadMore query={queue} shown={queue.data.pages.reduce((n, p) => n + p.items.length, 0)} what="stories" />
        </div>
      )}
    </>
  );
}
