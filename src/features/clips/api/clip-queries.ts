import { queryOptions } from '@tanstack/react-query';
import { clipListResponseSchema, momentListResponseSchema } from '@shared/clips/clip.schema';
import { clipSuggestionsResponseSchema } from '@shared/speech/speech.schema';
import { apiFetch } from '@/lib/api';
import { queryClient } from '@/lib/query-client';
import { isInProgress } from '../lib/clip-format';

/** How often to ask again while a clip is uploading or processing. */
export const CLIP_POLL_MS = 1000;

/** How often to ask again while a clip's sound waits to be listened to or is being listened to. */
export const LISTEN_POLL_MS = 2000;

/** Mutation keys, so polling can hold off while the order is being saved. */
export const clipMutationKeys = {
  order: ['clips', 'order'] as const,
};

/** Query options for clips and their moments. */
export const clipQueries = {
  all: ['clips'] as const,
  /**
   * A build's clips in timeline order. Polls every second while any clip is
   * uploaded or processing, then stops by itself.
   */
  list: (buildId: number) =>
    queryOptions({
      queryKey: [...clipQueries.all, 'list', buildId] as const,
      queryFn: async ({ signal }) => {
        const { items } = await apiFetch(`/api/builds/${buildId}/clips`, { schema: clipListResponseSchema, signal });
        return items;
      },
      refetchInterval: (query) => {
        // A poll landing mid-reorder would undo the optimistic order; the reorder refetches when it settles.
        if (queryClient.isMutating({ mutationKey: clipMutationKeys.order }) > 0) return false;
        return query.state.data?.some(isInProgress) ? CLIP_POLL_MS : false;
      },
    }),
  /** The moments marked in one clip, as the server sends them. */
  moments: (clipId: number) =>
    queryOptions({
      queryKey: [...clipQueries.all, 'moments', clipId] as const,
      queryFn: async ({ signal }) => {
        const { items } = await apiFetch(`/api/clips/${clipId}/moments`, { schema: momentListResponseSchema, signal });
        return items;
      },
    }),
  /** Every clip's suggestions (what readings change: a suggestion is marked logged). */
  allSuggestions: ['clips', 'suggestions'] as const,
  /**
   * The readings heard in a clip's sound and read off its display, with where that stands; asks
   * again every two seconds while it waits or runs (the server queues a clip nobody listened to yet).
   */
  suggestions: (clipId: number) =>
    queryOptions({
      queryKey: [...clipQueries.all, 'suggestions', clipId] as const,
      queryFn: ({ signal }) => apiFetch(`/api/clips/${clipId}/suggestions`, { schema: clipSuggestionsResponseSchema, signal }),
      refetchInterval: (query) => {
        const state = query.state.data?.state;
        return state === 'queued' || state === 'running' ? LISTEN_POLL_MS : false;
      },
    }),
};
