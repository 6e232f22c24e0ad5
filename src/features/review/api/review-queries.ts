import { infiniteQueryOptions, queryOptions } from '@tanstack/react-query';
import { auditListResponseSchema, buildFlagsResponseSchema, queueResponseSchema } from '@shared/review/review.schema';
import { reviewSheetSchema } from '@shared/review/review-sheet.schema';
import { apiFetch } from '@/lib/api';

export const QUEUE_PAGE_SIZE = 50;
export const AUDIT_PAGE_SIZE = 100;

/** Query options for the review queue, one story's review sheet and its audit trail. */
export const reviewQueries = {
  all: ['review'] as const,
  /** Stories in review, oldest sent first, one keyset page at a time (`nextAfter` → `after`). */
  queue: () =>
    infiniteQueryOptions({
      queryKey: [...reviewQueries.all, 'queue'] as const,
      queryFn: ({ pageParam, signal }) => {
        const params = new URLSearchParams({ limit: String(QUEUE_PAGE_SIZE) });
        if (pageParam !== undefined) params.set('after', pageParam);
        return apiFetch(`/api/review/queue?${params}`, { schema: queueResponseSchema, signal });
      },
      initialPageParam: undefined as string | undefined,
      getNextPageParam: (lastPage) => lastPage.nextAfter ?? undefined,
      // Other moderators take stories and builders send new ones; a queue left open stays near the truth.
      refetchInterval: 60_000,
    }),
  /** Everything needed to check one story: its cited readings and clearances, checks, blockers, claim. */
  sheet: (storyId: number) =>
    queryOptions({
      queryKey: [...reviewQueries.all, 'sheet', storyId] as const,
      queryFn: ({ signal }) => apiFetch(`/api/review/stories/${storyId}`, { schema: reviewSheetSchema, signal }),
    }),
  /** The flags standing on a build's readings and clearances (the builder answers them in the workspace). */
  buildFlags: (buildId: number) =>
    queryOptions({
      queryKey: [...reviewQueries.all, 'build-flags', buildId] as const,
      queryFn: ({ signal }) => apiFetch(`/api/review/builds/${buildId}/flags`, { schema: buildFlagsResponseSchema, signal }),
      select: (data) => data.items,
    }),
  /** The story's audit trail, newest first, one keyset page at a time (`nextBefore` → `before`). */
  audit: (storyId: number) =>
    infiniteQueryOptions({
      queryKey: [...reviewQueries.all, 'audit', storyId] as const,
      queryFn: ({ pageParam, signal }) => {
        const params = new URLSearchParams({ limit: String(AUDIT_PAGE_SIZE) });
        if (pageParam !== undefined) params.set('before', pageParam);
        return apiFetch(`/api/stories/${storyId}/audit?${params}`, { schema: auditListResponseSchema, signal });
      },
      initialPageParam: undefined as string | undefined,
      getNextPageParam: (lastPage) => lastPage.nextBefore ?? undefined,
    }),
};
