import { infiniteQueryOptions, queryOptions } from '@tanstack/react-query';
import { buildResponseSchema, listBuildsResponseSchema } from '@shared/builds/build.schema';
import { apiFetch } from '@/lib/api';

export const BUILDS_PAGE_SIZE = 20;

/** Query options for the signed-in builder's builds. */
export const buildQueries = {
  all: ['builds'] as const,
  /** Own builds, newest first, one keyset page at a time (`nextBefore` → `before`). */
  list: ({ limit = BUILDS_PAGE_SIZE }: { limit?: number } = {}) =>
    infiniteQueryOptions({
      queryKey: [...buildQueries.all, 'list', { limit }] as const,
      queryFn: ({ pageParam, signal }) => {
        const params = new URLSearchParams({ limit: String(limit) });
        if (pageParam !== undefined) params.set('before', String(pageParam));
        return apiFetch(`/api/builds?${params}`, { schema: listBuildsResponseSchema, signal });
      },
      initialPageParam: undefined as number | undefined,
      getNextPageParam: (lastPage) => lastPage.nextBefore ?? undefined,
    }),
  /** One build with its parts. */
  detail: (buildId: number) =>
    queryOptions({
      queryKey: [...buildQueries.all, 'detail', buildId] as const,
      queryFn: async ({ signal }) => {
        const { build } = await apiFetch(`/api/builds/${buildId}`, { schema: buildResponseSchema, signal });
        return build;
      },
    }),
};
