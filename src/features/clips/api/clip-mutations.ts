import { useMutation, useQueryClient } from '@tanstack/react-query';
import {
  clipListResponseSchema,
  clipOrderSchema,
  clipPatchSchema,
  clipResponseSchema,
  momentInputSchema,
  momentPatchSchema,
  momentResponseSchema,
  type Clip,
  type ClipPatch,
} from '@shared/clips/clip.schema';
import { apiFetch } from '@/lib/api';
import { clipMutationKeys, clipQueries } from './clip-queries';

/** Error code the server sends when a clip cannot be deleted because something cites it. */
export const CLIP_IN_USE = 'clip_in_use';

/**
 * PUT /api/builds/:buildId/clips/order. Optimistic: the list takes the new
 * order at once and goes back to the old one if the server refuses.
 */
export function useReorderClips(buildId: number) {
  const queryClient = useQueryClient();
  const listKey = clipQueries.list(buildId).queryKey;
  // The settling mutation still counts as pending inside its own callbacks.
  const isLastOrderMutation = () => queryClient.isMutating({ mutationKey: clipMutationKeys.order }) === 1;
  return useMutation({
    mutationKey: clipMutationKeys.order,
    mutationFn: async (clipIds: number[]) => {
      const { items } = await apiFetch(`/api/builds/${buildId}/clips/order`, {
        method: 'PUT',
        body: clipOrderSchema.parse({ clipIds }),
        schema: clipListResponseSchema,
      });
      return items;
    },
    onMutate: async (clipIds) => {
      await queryClient.cancelQueries({ queryKey: listKey });
      const previous = queryClient.getQueryData(listKey);
      if (previous) queryClient.setQueryData(listKey, reorder(previous, clipIds));
      return { previous };
    },
    onError: (_error, _clipIds, context) => {
      if (context?.previous) queryClient.setQueryData(listKey, context.previous);
    },
    // With moves in quick succession, only the last one to finish may write the list back:
    // an earlier answer would briefly undo the later optimistic order.
    onSuccess: (items) => {
      if (isLastOrderMutation()) queryClient.setQueryData(listKey, items);
    },
    onSettled: () => (isLastOrderMutation() ? queryClient.invalidateQueries({ queryKey: clipQueries.all }) : undefined),
  });
}

function reorder(clips: Clip[], clipIds: number[]): Clip[] {
  const byId = new Map(clips.map((clip) => [clip.id, clip]));
  const ordered = clipIds.flatMap((id, position) => {
    const clip = byId.get(id);
    return clip ? [{ ...clip, position }] : [];
  });
  // Anything the new order did not name (a clip that arrived meanwhile) stays, at the end.
  const rest = clips.filter((clip) => !clipIds.includes(clip.id));
  return [...ordered, ...rest];
}

/** PATCH /api/clips/:clipId: rename, trim. The answer replaces the clip in its build's list. */
export function useUpdateClip(buildId: number) {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: async ({ clipId, patch }: { clipId: number; patch: ClipPatch }) => {
      const { clip } = await apiFetch(`/api/clips/${clipId}`, {
        method: 'PATCH',
        body: clipPatchSchema.parse(patch),
        schema: clipResponseSchema,
      });
      return clip;
    },
    onSuccess: async (clip) => {
      queryClient.setQueryData(clipQueries.list(buildId).queryKey, (clips) =>
        clips?.map((item) => (item.id === clip.id ? clip : item)),
      );
      await queryClient.invalidateQueries({ queryKey: clipQueries.all });
    },
  });
}

/** DELETE /api/clips/:clipId. A 409 `clip_in_use` comes back as an ApiError with the server's reason. */
export function useDeleteClip(buildId: number) {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: (clipId: number) => apiFetch(`/api/clips/${clipId}`, { method: 'DELETE' }),
    onSuccess: async (_data, clipId) => {
      queryClient.setQueryData(clipQueries.list(buildId).queryKey, (clips) => clips?.filter((clip) => clip.id !== clipId));
      queryClient.removeQueries({ queryKey: clipQueries.moments(clipId).queryKey });
      await queryClient.invalidateQueries({ queryKey: clipQueries.all });
    },
  });
}

/** POST /api/clips/:clipId/moments { atMs, label }. */
export function useCreateMoment(clipId: number) {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: async (input: { atMs: number; label?: string }) => {
      const { moment } = await apiFetch(`/api/clips/${clipId}/moments`, {
        method: 'POST',
        body: momentInputSchema.parse(input),
        schema: momentResponseSchema,
      });
      return moment;
    },
    onSuccess: async (moment) => {
      queryClient.setQueryData(clipQueries.moments(clipId).queryKey, (moments) =>
        moments && !moments.some((m) => m.id === moment.id) ? [...moments, moment] : moments,
      );
      await queryClient.invalidateQueries({ queryKey: clipQueries.all });
    },
  });
}

/** PATCH /api/moments/:momentId { atMs?, label? }. */
export function useUpdateMoment(clipId: number) {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: async ({ momentId, patch }: { momentId: number; patch: { atMs?: number; label?: string } }) => {
      const { moment } = await apiFetch(`/api/moments/${momentId}`, {
        method: 'PATCH',
        body: momentPatchSchema.parse(patch),
        schema: momentResponseSchema,
      });
      return moment;
    },
    onSuccess: async (moment) => {
      queryClient.setQueryData(clipQueries.moments(clipId).queryKey, (moments) =>
        moments?.map((m) => (m.id === moment.id ? moment : m)),
      );
      await queryClient.invalidateQueries({ queryKey: clipQueries.all });
    },
  });
}

/** DELETE /api/moments/:momentId. */
export function useDeleteMoment(clipId: number) {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: (momentId: number) => apiFetch(`/api/moments/${momentId}`, { method: 'DELETE' }),
    onSuccess: async (_data, momentId) => {
      queryClient.setQueryData(clipQueries.moments(clipId).queryKey, (moments) => moments?.filter((m) => m.id !== momentId));
      await queryClient.invalidateQueries({ queryKey: clipQueries.all });
    },
  });
}

/**
 * POST (dismiss) or DELETE (bring back) /api/clips/:clipId/suggestions/:id/dismiss.
 * Optimistic: the list marks it at once and goes back if the server refuses.
 */
export function useSetSuggestionDismissed(clipId: number) {
  const queryClient = useQueryClient();
  const key = clipQueries.suggestions(clipId).queryKey;
  return useMutation({
    mutationFn: ({ suggestionId, dismissed }: { suggestionId: string; dismissed: boolean }) =>
      apiFetch(`/api/clips/${clipId}/suggestions/${encodeURIComponent(suggestionId)}/dismiss`, { method: dismissed ? 'POST' : 'DELETE' }),
    onMutate: async ({ suggestionId, dismissed }) => {
      await queryClient.cancelQueries({ queryKey: key });
      const previous = queryClient.getQueryData(key);
      if (previous) {
        queryClient.setQueryData(key, {
          ...previous,
          suggestions: previous.suggestions.map((p) => (p.id === suggestionId ? { ...p, dismissed } : p)),
        });
      }
      return { previous };
    },
    onError: (_error, _vars, context) => {
      if (context?.previous) queryClient.setQueryData(key, context.previous);
    },
    onSettled: () => queryClient.invalidateQueries({ queryKey: key }),
  });
}
