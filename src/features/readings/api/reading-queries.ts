import { infiniteQueryOptions, queryOptions } from '@tanstack/react-query';
import { instrumentListResponseSchema, type Instrument } from '@shared/instruments/instrument.schema';
import { readingHistoryResponseSchema, readingListResponseSchema } from '@shared/readings/reading.schema';
import { apiFetch } from '@/lib/api';

/** Readings per page; the server allows up to 1000, and a build's bench session rarely needs more than one page. */
export const READINGS_PAGE_SIZE = 500;

/** Query options for a build's readings and their history. */
export const readingQueries = {
  all: ['readings'] as const,
  /** A build's readings by id, one keyset page at a time (`nextAfter` → `after`). */
  list: (buildId: number) =>
    infiniteQueryOptions({
      queryKey: [...readingQueries.all, 'list', buildId] as const,
      queryFn: ({ pageParam, signal }) => {
        const params = new URLSearchParams({ limit: String(READINGS_PAGE_SIZE) });
        if (pageParam !== undefined) params.set('after', String(pageParam));
        return apiFetch(`/api/builds/${buildId}/readings?${params}`, { schema: readingListResponseSchema, signal });
      },
      initialPageParam: undefined as number | undefined,
      getNextPageParam: (lastPage) => lastPage.nextAfter ?? undefined,
    }),
  /** Earlier states of one reading, newest first. */
  history: (readingId: number) =>
    queryOptions({
      queryKey: [...readingQueries.all, 'history', readingId] as const,
      queryFn: async ({ signal }) => {
        const { items } = await apiFetch(`/api/readings/${readingId}/history`, { schema: readingHistoryResponseSchema, signal });
        return items;
      },
    }),
};

/** Where the build's readings download as CSV (a plain link: the browser saves the file). */
export function readingsCsvUrl(buildId: number): string {
  return `/api/builds/${buildId}/readings.csv`;
}

/** Most instruments asked for per page (the server's maximum). */
const INSTRUMENTS_PAGE = 200;

/**
 * The signed-in builder's instruments, every page, for choosing one in the reading form. Under
 * the instruments root key, so anything that changes an instrument refreshes this list too.
 */
export const readingInstrumentsQuery = queryOptions({
  queryKey: ['instruments', 'for-readings'] as const,
  queryFn: async ({ signal }) => {
    const all: Instrument[] = [];
    let after: number | null | undefined;
    do {
      const params = new URLSearchParams({ limit: String(INSTRUMENTS_PAGE) });
      if (after) params.set('after', String(after));
      const page = await apiFetch(`/api/instruments?${params}`, { schema: instrumentListResponseSchema, signal });
      all.push(...page.items);
      after = page.nextAfter;
    } while (after);
    return all;
  },
});
