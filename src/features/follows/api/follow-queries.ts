import { infiniteQueryOptions, queryOptions } from '@tanstack/react-query';
import type { followListResponseSchema, preferencesResponseSchema } from '@shared/public/follows.schema';
import { apiFetch, type Unparsed } from '@/lib/api';

// Read on the story page (the reader's units), so unparsed like the public queries; the server's
// tests parse these responses with their schemas.

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
        return apiFetch<Unparsed<typeof followListResponseSchema>>(`/api/me/follows?${params}`, { signal });
      },
      initialPageParam: undefined as number | undefined,
      getNextPageParam: (last) => last.nextAfter ?? undefined,
    }),
  /** Units and the weekly digest. */
  preferences: () =>
    queryOptions({
      queryKey: [...followQueries.all, 'preferences'] as const,
      queryFn: async ({ signal }) => (await apiFetch<Unparsed<typeof preferencesResponseSchema>>('/api/me/preferences', { signal })).preferences,
      staleTime: 5 * 60_000,
    }),
};
