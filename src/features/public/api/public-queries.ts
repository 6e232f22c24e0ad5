import { infiniteQueryOptions, queryOptions } from '@tanstack/react-query';
import type { publicBuildSchema, publicBuilderProfileSchema } from '@shared/public/public-build.schema';
import type { publicStoryListResponseSchema, publicStorySchema } from '@shared/public/public-story.schema';
import type { partSheetSchema, verifySheetSchema } from '@shared/public/sheet.schema';
import { apiFetch, type Unparsed } from '@/lib/api';

// These are a reader's first loads (a story, the home page, a profile, a scanned sheet), so they
// are typed from the shared schemas but not parsed here: that keeps zod out of the first load.
// The server's API tests (tests/server/public, sheets) parse each of these responses with its schema.

export const PUBLIC_PAGE_SIZE = 12;

/** Filters of the public story list, as the home page's address carries them. */
export interface StoryFilters {
  tag?: string;
  builder?: string;
  outOfSpec?: boolean;
  q?: string;
}

function listParams(filters: StoryFilters, before: string | undefined, limit: number): URLSearchParams {
  const params = new URLSearchParams({ limit: String(limit) });
  if (filters.tag) params.set('tag', filters.tag);
  if (filters.builder) params.set('builder', filters.builder);
  if (filters.outOfSpec) params.set('verdict', 'out-of-spec');
  if (filters.q) params.set('q', filters.q);
  if (before) params.set('before', before);
  return params;
}

/** Query options for what anyone may read: published stories, public builds and builders, sheets. */
export const publicQueries = {
  all: ['public'] as const,
  /** Newest published first, one keyset page at a time. */
  stories: (filters: StoryFilters = {}, limit = PUBLIC_PAGE_SIZE) =>
    infiniteQueryOptions({
      queryKey: [...publicQueries.all, 'stories', filters, limit] as const,
      queryFn: ({ pageParam, signal }) =>
        apiFetch<Unparsed<typeof publicStoryListResponseSchema>>(`/api/public/stories?${listParams(filters, pageParam, limit)}`, { signal }),
      initialPageParam: undefined as string | undefined,
      getNextPageParam: (last) => last.nextBefore ?? undefined,
    }),
  /** Stories of the builders the signed-in reader follows. */
  following: (limit = PUBLIC_PAGE_SIZE) =>
    infiniteQueryOptions({
      queryKey: [...publicQueries.all, 'following', limit] as const,
      queryFn: ({ pageParam, signal }) =>
        apiFetch<Unparsed<typeof publicStoryListResponseSchema>>(`/api/public/stories/following?${listParams({}, pageParam, limit)}`, { signal }),
      initialPageParam: undefined as string | undefined,
      getNextPageParam: (last) => last.nextBefore ?? undefined,
    }),
  /**
   * One published story with its claims' evidence. Figures come as the builder entered them;
   * the page converts them for the reader, so switching units needs no second request.
   */
  story: (storyId: number) =>
    queryOptions({
      queryKey: [...publicQueries.all, 'story', storyId] as const,
      queryFn: ({ signal }) => apiFetch<Unparsed<typeof publicStorySchema>>(`/api/public/stories/${storyId}`, { signal }),
    }),
  build: (buildId: number) =>
    queryOptions({
      queryKey: [...publicQueries.all, 'build', buildId] as const,
      queryFn: ({ signal }) => apiFetch<Unparsed<typeof publicBuildSchema>>(`/api/public/builds/${buildId}`, { signal }),
    }),
  builder: (login: string) =>
    queryOptions({
      queryKey: [...publicQueries.all, 'builder', login] as const,
      queryFn: ({ signal }) => apiFetch<Unparsed<typeof publicBuilderProfileSchema>>(`/api/public/builders/${encodeURIComponent(login)}`, { signal }),
    }),
  sheet: (partId: number) =>
    queryOptions({
      queryKey: [...publicQueries.all, 'sheet', partId] as const,
      queryFn: ({ signal }) => apiFetch<Unparsed<typeof partSheetSchema>>(`/api/public/parts/${partId}/sheet`, { signal }),
    }),
  /** The figures of a printed sheet read again now; `search` is the sheet's own `story=…&rev=…`. */
  verify: (partId: number, search: string) =>
    queryOptions({
      queryKey: [...publicQueries.all, 'verify', partId, search] as const,
      queryFn: ({ signal }) => apiFetch<Unparsed<typeof verifySheetSchema>>(`/api/public/verify/parts/${partId}?${search}`, { signal }),
      // A verification is about "now": always ask again.
      staleTime: 0,
    }),
};
