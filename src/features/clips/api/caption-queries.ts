import { queryOptions, useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import type { CorrectionSpan } from '@shared/speech/caption-corrections';
import {
  captionCorrectionListResponseSchema,
  captionCorrectionResponseSchema,
  clipTranscriptResponseSchema,
  type CaptionCorrection,
} from '@shared/speech/speech.schema';
import { apiFetch } from '@/lib/api';
import { clipQueries, LISTEN_POLL_MS } from './clip-queries';

/** Query options for a clip's words and its builder's caption corrections (under `clipQueries.all`). */
export const captionQueries = {
  /**
   * The words heard in a clip, corrections applied, as its captions are made from them; asks
   * again every two seconds while listening waits or runs.
   */
  transcript: (clipId: number) =>
    queryOptions({
      queryKey: [...clipQueries.all, 'transcript', clipId] as const,
      queryFn: ({ signal }) => apiFetch(`/api/clips/${clipId}/transcript`, { schema: clipTranscriptResponseSchema, signal }),
      refetchInterval: (query) => {
        const state = query.state.data?.state;
        return state === 'queued' || state === 'running' ? LISTEN_POLL_MS : false;
      },
    }),
  /** The clip's caption corrections, in time order. */
  corrections: (clipId: number) =>
    queryOptions({
      queryKey: [...clipQueries.all, 'caption-corrections', clipId] as const,
      queryFn: async ({ signal }) => {
        const { items } = await apiFetch(`/api/clips/${clipId}/caption-corrections`, { schema: captionCorrectionListResponseSchema, signal });
        return items;
      },
    }),
};

/**
 * The address of a clip's captions for `<track>`: with a version drawn from its corrections, so
 * the player loads them again after each correction (a track reloads when its address changes).
 */
export function captionsTrackUrl(clipId: number, corrections: readonly CaptionCorrection[] | undefined): string {
  const base = `/api/clips/${clipId}/captions.vtt`;
  if (!corrections || corrections.length === 0) return base;
  const latest = Math.max(...corrections.map((c) => Date.parse(c.updatedAt) || 0));
  return `${base}?v=${corrections.length}-${latest}`;
}

/** The captions address of a clip, following its corrections (`captionsTrackUrl`). */
export function useCaptionsTrackUrl(clipId: number): string {
  const corrections = useQuery(captionQueries.corrections(clipId));
  return captionsTrackUrl(clipId, corrections.data);
}

/** What a correction changes on screen: the words, the corrections, the captions' address and the suggestions. */
function useRefreshAfterCorrection(clipId: number) {
  const queryClient = useQueryClient();
  return () =>
    Promise.all([
      queryClient.invalidateQueries({ queryKey: captionQueries.transcript(clipId).queryKey }),
      queryClient.invalidateQueries({ queryKey: captionQueries.corrections(clipId).queryKey }),
      queryClient.invalidateQueries({ queryKey: clipQueries.suggestions(clipId).queryKey }),
    ]);
}

/** POST /api/clips/:clipId/caption-corrections: the builder's words for a span (replacing corrections it overlaps). */
export function useSaveCaptionCorrection(clipId: number) {
  const refresh = useRefreshAfterCorrection(clipId);
  return useMutation({
    mutationFn: async (span: CorrectionSpan) => {
      const { correction } = await apiFetch(`/api/clips/${clipId}/caption-corrections`, {
        method: 'POST',
        body: { startMs: span.startMs, endMs: span.endMs, text: span.text },
        schema: captionCorrectionResponseSchema,
      });
      return correction;
    },
    onSuccess: refresh,
  });
}

/** DELETE /api/clips/:clipId/caption-corrections/:id for each given: the words heard there come back. */
export function useUndoCaptionCorrections(clipId: number) {
  const refresh = useRefreshAfterCorrection(clipId);
  return useMutation({
    mutationFn: async (ids: readonly number[]) => {
      for (const id of ids) await apiFetch(`/api/clips/${clipId}/caption-corrections/${id}`, { method: 'DELETE' });
    },
    // Some may be gone even when a later one failed: refresh either way.
    onSettled: refresh,
  });
}
