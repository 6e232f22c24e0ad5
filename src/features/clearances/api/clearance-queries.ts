import { infiniteQueryOptions, queryOptions } from '@tanstack/react-query';
import { clearanceListResponseSchema } from '@shared/clearances/clearance.schema';
import { specListResponseSchema, specResponseSchema } from '@shared/specs/spec-library.schema';
import { apiFetch } from '@/lib/api';

/** Clearances per page (the server's default and a generous build's worth). */
export const CLEARANCES_PAGE_SIZE = 200;
/** Specs shown per search in the clearance form. */
const SPEC_SEARCH_LIMIT = 20;

/** Query options for a build's clearances. */
export const clearanceQueries = {
  all: ['clearances'] as const,
  /** A build's clearances by id, each worked out from its readings now; keyset pages (`nextAfter` → `after`). */
  list: (buildId: number) =>
    infiniteQueryOptions({
      queryKey: [...clearanceQueries.all, 'list', buildId] as const,
      queryFn: ({ pageParam, signal }) => {
        const params = new URLSearchParams({ limit: String(CLEARANCES_PAGE_SIZE) });
        if (pageParam !== undefined) params.set('after', String(pageParam));
        return apiFetch(`/api/builds/${buildId}/clearances?${params}`, { schema: clearanceListResponseSchema, signal });
      },
      initialPageParam: undefined as number | undefined,
      getNextPageParam: (lastPage) => lastPage.nextAfter ?? undefined,
    }),
};

/**
 * The spec library as the clearance form searches it: own and shared specs, and one spec with
 * every version. Under the specs root key, so a new version anywhere refreshes these too.
 */
export const clearanceSpecQueries = {
  search: (q: string) =>
    queryOptions({
      queryKey: ['specs', 'for-clearances', 'search', q] as const,
      queryFn: async ({ signal }) => {
        const params = new URLSearchParams({ limit: String(SPEC_SEARCH_LIMIT) });
        if (q.trim()) params.set('q', q.trim());
        const { items } = await apiFetch(`/api/specs?${params}`, { schema: specListResponseSchema, signal });
        return items;
      },
    }),
  detail: (specId: number) =>
    queryOptions({
      queryKey: ['specs', 'for-clearances', 'detail', specId] as const,
      queryFn: async ({ signal }) => {
        const { spec } = await apiFetch(`/api/specs/${specId}`, { schema: specResponseSchema, signal });
        return spec;
      },
    }),
};
