import { useMutation, useQueryClient } from '@tanstack/react-query';
import {
  storyInputSchema,
  storyPatchSchema,
  storyResponseSchema,
  storyRevisionResponseSchema,
  type Story,
  type StoryInput,
  type StoryPatch,
} from '@shared/stories/story.schema';
import { apiFetch } from '@/lib/api';
import { storyQueries } from './story-queries';

/** POST /api/builds/:buildId/stories. The new entry goes into the cache so the editor opens at once. */
export function useCreateStory(buildId: number) {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: async (input: StoryInput) => {
      const { story } = await apiFetch(`/api/builds/${buildId}/stories`, {
        method: 'POST',
        body: storyInputSchema.parse(input),
        schema: storyResponseSchema,
      });
      return story;
    },
    onSuccess: async (story) => {
      queryClient.setQueryData(storyQueries.detail(story.id).queryKey, story);
      await queryClient.invalidateQueries({ queryKey: storyQueries.all });
    },
  });
}

/**
 * PATCH /api/stories/:storyId, the editor's autosave. Not a `useMutation`: the autosave keeps its
 * own state (saving, offline, conflict) and must never queue two saves of one entry at once.
 * Rejects with the server's 409 `edit_conflict` when `lockVersion` is stale.
 */
export async function patchStory(storyId: number, patch: StoryPatch): Promise<Story> {
  const { story } = await apiFetch(`/api/stories/${storyId}`, {
    method: 'PATCH',
    body: storyPatchSchema.parse(patch),
    schema: storyResponseSchema,
  });
  return story;
}

/** GET /api/stories/:storyId without the cache: the version stored now (after a conflict). */
export async function fetchStoredStory(storyId: number): Promise<Story> {
  const { story } = await apiFetch(`/api/stories/${storyId}`, { schema: storyResponseSchema });
  return story;
}

/** POST /api/stories/:storyId/revisions: keeps the stored state as a 'kept' revision. */
export function useKeepRevision(storyId: number) {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: async () => {
      const { revision } = await apiFetch(`/api/stories/${storyId}/revisions`, {
        method: 'POST',
        schema: storyRevisionResponseSchema,
      });
      return revision;
    },
    onSuccess: () => queryClient.invalidateQueries({ queryKey: storyQueries.all }),
  });
}
