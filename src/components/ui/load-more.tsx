import type { UseInfiniteQueryResult } from '@tanstack/react-query';
import { errorMessage } from '@/lib/api';
import { Button } from './button';

interface LoadMoreProps {
  /** The keyset-paginated query behind the list. */
  query: Pick<UseInfiniteQueryResult, 'hasNextPage' | 'fetchNextPage' | 'isFetchingNextPage' | 'isRefetchError' | 'isFetchNextPageError' | 'error'>;
  /** How many rows are on screen. */
  shown: number;
  /** Plural noun for the failure message ("accounts", "builds"). */
  what: string;
  variant?: 'primary' | 'secondary';
}

/** The footer of a keyset-paginated list: count, "Load more", and what went wrong if it did. */
export function LoadMore({ query, shown, what, variant = 'secondary' }: LoadMoreProps) {
  return (
    <div className="flex flex-wrap items-center gap-3" data-print="hide">
      <p className="figures text-xs text-ink-muted" aria-live="polite">
        {shown} shown{query.hasNextPage ? ' · more to load' : ' · all loaded'}
      </p>
      {query.hasNextPage && (
        <Button variant={variant} size="sm" onClick={() => void query.fetchNextPage()} loading={query.isFetchingNextPage} loadingText="Loading more…">
          Load more
        </Button>
      )}
      {query.isRefetchError && (
        <p role="alert" className="text-sm text-danger">
          The list could not be refreshed and may be out of date: {errorMessage(query.error)}
        </p>
      )}
      {query.isFetchNextPageError && (
        <p role="alert" className="text-sm text-danger">
          More {what} could not be loaded: {errorMessage(query.error)} Press “Load more” to try again.
        </p>
      )}
    </div>
  );
}
