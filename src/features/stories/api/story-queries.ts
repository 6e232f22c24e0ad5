import { infiniteQueryOptions, queryOptions } from '@tanstack/react-query';
import {
  storyListResponseSchema,
  storyResponseSchema,
  storyRevisionListResponseSchema,
  storyRevisionResponseSchema,
} from '@shared/stories/story.schema';
import { apiFetch } from '@/lib/api';

/** A build's diary rarely runs past a page; the list still pages by keyset. */
export const STORIES_PAGE_SIZE = 100;
export const REVISIONS_PAGE_SIZE = 50;

/** Query options for diary entries and their revisions. */
export const storyQueries = {
  all: ['stories'] as const,
  /** A build's entries, newest first by id, one keyset page at a time (`nextBefore` → `before`). */
  list: (buildId: number) =>
    infiniteQueryOptions({
      queryKey: [...storyQueries.all, 'list', buildId] as const,
      queryFn: ({ pageParam, signal }) => {
        const params = new URLSearchParams({ limit: String(STORIES_PAGE_SIZE) });
        if (pageParam !== undefined) params.set('before', String(pageParam));
        return apiFetch(`/api/builds/${buildId}/stories?${params}`, { schema: storyListResponseSchema, signal });
      },
      initialPageParam: undefined as number | undefined,
      getNextPageParam: (lastPage) => lastPage.nextBefore ?? undefined,
    }),
  /** One entry with its body. The editor reads it once when it opens and then keeps its own copy. */
  detail: (storyId: number) =>
    queryOptions({
      queryKey: [...storyQueries.all, 'detail', storyId] as const,
      queryFn: async ({ signal }) => {
        const { story } = await apiFetch(`/api/stories/${storyId}`, { schema: storyResponseSchema, signal });
        return story;
      },
    }),
  /** Kept states of an entry, newest first (without bodies), one keyset page at a time. */
  revisions: (storyId: number) =>
    infiniteQueryOptions({
      queryKey: [...storyQueries.all, 'revisions', storyId] as const,
      queryFn: ({ pageParam, signal }) => {
        const params = new URLSearchParams({ limit: String(REVISIONS_PAGE_SIZE) });
        if (pageParam !== undefined) params.set('before', String(pageParam));
        return apiFetch(`/api/stories/${storyId}/revisions?${params}`, { schema: storyRevisionListResponseSchema, signal });
      },
      initialPageParam: undefined as number | undefined,
      getNextPageParam: (lastPage) => lastPage.nextBefore ?? undefined,
    }),
  /** One revision with its body; revisions never change, so it is never refetched. */
  revision: (storyId: number, number: number) =>
    queryOptions({
      queryKey: [...storyQueries.all, 'revision', storyId, number] as const,
      queryFn: async ({ signal }) => {
        const { revision } = await apiFetch(`/api/stories/${storyId}/revisions/${number}`, { schema: storyRevisionResponseSchema, signal });
        return revision;
      },
      staleTime: Infinity,
    }),
};
