import { infiniteQueryOptions, queryOptions } from '@tanstack/react-query';
import { followListResponseSchema, preferencesResponseSchema } from '@shared/public/follows.schema';
import { apiFetch } from '@/lib/api';

/** Query options for the signed-in reader's follows and preferences. */
export const followQueries = {
  all: ['follows'] as const,
  /** Builders followed, keyset on the builder's id. */
  list: () =>
    infiniteQueryOptions({
      queryKey: [...followQueries.all, 'list'] as const,
      queryFn: ({ pageParam, signal }) => {
        const params = new URLSearchParams({ limit: '100' });
        if (pageParam !== undefined) params.set('after', String(pageParam));
        return apiFetch(`/api/me/follows?${params}`, { schema: followListResponseSchema, signal });
      },
      initialPageParam: undefined as number | undefined,
      getNextPageParam: (last) => last.nextAfter ?? undefined,
    }),
  /** Units and the weekly digest. */
  preferences: () =>
    queryOptions({
      queryKey: [...followQueries.all, 'preferences'] as const,
      queryFn: async ({ signal }) => (await apiFetch('/api/me/preferences', { schema: preferencesResponseSchema, signal })).preferences,
      staleTime: 5 * 60_000,
    }),
};
