import { infiniteQueryOptions, queryOptions } from '@tanstack/react-query';
import {
  instrumentListResponseSchema,
  instrumentResponseSchema,
  zeroCheckListResponseSchema,
} from '@shared/instruments/instrument.schema';
import { apiFetch } from '@/lib/api';

/** A register rarely holds more than a few dozen instruments: one page usually holds them all. */
export const INSTRUMENTS_PAGE_SIZE = 100;

/** Query options for the signed-in builder's instruments and their zero checks. */
export const instrumentQueries = {
  all: ['instruments'] as const,
  /** Own instruments, oldest first (id ascending), one keyset page at a time (`nextAfter` → `after`). */
  list: ({ limit = INSTRUMENTS_PAGE_SIZE }: { limit?: number } = {}) =>
    infiniteQueryOptions({
      queryKey: [...instrumentQueries.all, 'list', { limit }] as const,
      queryFn: ({ pageParam, signal }) => {
        const params = new URLSearchParams({ limit: String(limit) });
        if (pageParam !== undefined) params.set('after', String(pageParam));
        return apiFetch(`/api/instruments?${params}`, { schema: instrumentListResponseSchema, signal });
      },
      initialPageParam: undefined as number | undefined,
      getNextPageParam: (lastPage) => lastPage.nextAfter ?? undefined,
    }),
  /** One instrument as stored now (used to reload after someone saved it elsewhere). */
  detail: (instrumentId: number) =>
    queryOptions({
      queryKey: [...instrumentQueries.all, 'detail', instrumentId] as const,
      queryFn: async ({ signal }) => {
        const { instrument } = await apiFetch(`/api/instruments/${instrumentId}`, { schema: instrumentResponseSchema, signal });
        return instrument;
      },
    }),
  /** An instrument's zero checks, newest first. */
  zeroChecks: (instrumentId: number) =>
    queryOptions({
      queryKey: [...instrumentQueries.all, 'zero-checks', instrumentId] as const,
      queryFn: async ({ signal }) => {
        const { items } = await apiFetch(`/api/instruments/${instrumentId}/zero-checks`, { schema: zeroCheckListResponseSchema, signal });
        return items;
      },
    }),
};
