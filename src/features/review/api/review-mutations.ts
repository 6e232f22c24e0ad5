import { useMutation, useQueryClient } from '@tanstack/react-query';
import type { z } from 'zod';
import { answerInputSchema, checkInputSchema, transitionInputSchema, type TransitionInput } from '@shared/review/review.schema';
import { checkResponseSchema, claimResponseSchema, transitionResponseSchema } from '@shared/review/review-sheet.schema';
import { storyQueries } from '@/features/stories/api/story-queries';
import { apiFetch } from '@/lib/api';
import { reviewQueries } from './review-queries';

/** A check changes a reading's or clearance's review state, which the build workspace shows too. */
const evidenceRoots = [['readings'], ['clearances']] as const;

function useInvalidateReview() {
  const queryClient = useQueryClient();
  return (also: readonly (readonly unknown[])[] = []) =>
    Promise.all([queryClient.invalidateQueries({ queryKey: reviewQueries.all }), ...also.map((queryKey) => queryClient.invalidateQueries({ queryKey }))]);
}

/** POST /api/review/stories/:storyId/claim: take (or renew) a story for review. */
export function useClaimStory() {
  const invalidate = useInvalidateReview();
  return useMutation({
    mutationFn: async (storyId: number) => (await apiFetch(`/api/review/stories/${storyId}/claim`, { method: 'POST', schema: claimResponseSchema })).claim,
    onSettled: () => invalidate(),
  });
}

/** DELETE /api/review/stories/:storyId/claim: let another moderator take it. */
export function useReleaseClaim() {
  const invalidate = useInvalidateReview();
  return useMutation({
    mutationFn: (storyId: number) => apiFetch(`/api/review/stories/${storyId}/claim`, { method: 'DELETE' }),
    onSettled: () => invalidate(),
  });
}

/** What a check form sends (the schema's input: the comment may be left out for "checked"). */
export type CheckInput = z.input<typeof checkInputSchema>;

/** POST /api/review/checks: one reading or clearance checked or flagged, for one story. */
export function useRecordCheck() {
  const invalidate = useInvalidateReview();
  return useMutation({
    mutationFn: async (input: CheckInput) =>
      (await apiFetch('/api/review/checks', { method: 'POST', body: checkInputSchema.parse(input), schema: checkResponseSchema })).check,
    onSuccess: () => invalidate(evidenceRoots),
  });
}

/** POST /api/review/checks/:checkId/answers: the builder answers a flag. */
export function useAnswerCheck() {
  const invalidate = useInvalidateReview();
  return useMutation({
    mutationFn: async ({ checkId, body }: { checkId: number; body: string }) =>
      (await apiFetch(`/api/review/checks/${checkId}/answers`, { method: 'POST', body: answerInputSchema.parse({ body }), schema: checkResponseSchema })).check,
    onSuccess: () => invalidate(),
  });
}

/** POST /api/stories/:storyId/transitions: a move in the publishing workflow. */
export function useStoryTransition(storyId: number) {
  const invalidate = useInvalidateReview();
  return useMutation({
    mutationFn: (input: TransitionInput) =>
      apiFetch(`/api/stories/${storyId}/transitions`, { method: 'POST', body: transitionInputSchema.parse(input), schema: transitionResponseSchema }),
    // Refused or not, the story may have moved under us: show what is true now.
    onSettled: () => invalidate([storyQueries.all, ...evidenceRoots]),
  });
}
