import { infiniteQueryOptions, useMutation, useQueryClient } from '@tanstack/react-query';
import {
  answerInputSchema,
  hideInputSchema,
  questionInputSchema,
  questionListResponseSchema,
  questionResponseSchema,
} from '@shared/public/questions.schema';
import { apiFetch } from '@/lib/api';

/** Query options for readers' questions under a story. */
export const questionQueries = {
  all: ['questions'] as const,
  /** Oldest first, keyset on id. */
  list: (storyId: number) =>
    infiniteQueryOptions({
      queryKey: [...questionQueries.all, storyId] as const,
      queryFn: ({ pageParam, signal }) => {
        const params = new URLSearchParams({ limit: '50' });
        if (pageParam !== undefined) params.set('after', String(pageParam));
        return apiFetch(`/api/public/stories/${storyId}/questions?${params}`, { schema: questionListResponseSchema, signal });
      },
      initialPageParam: undefined as number | undefined,
      getNextPageParam: (last) => last.nextAfter ?? undefined,
    }),
};

function useInvalidateQuestions() {
  const queryClient = useQueryClient();
  return () => queryClient.invalidateQueries({ queryKey: questionQueries.all });
}

/** POST /api/public/stories/:storyId/questions (signed in; rate-limited by the server). */
export function useAskQuestion(storyId: number) {
  const invalidate = useInvalidateQuestions();
  return useMutation({
    mutationFn: (body: string) =>
      apiFetch(`/api/public/stories/${storyId}/questions`, { method: 'POST', body: questionInputSchema.parse({ body }), schema: questionResponseSchema }),
    onSuccess: invalidate,
  });
}

/** POST /api/questions/:questionId/answer (the story's builder; answering again replaces the answer). */
export function useAnswerQuestion() {
  const invalidate = useInvalidateQuestions();
  return useMutation({
    mutationFn: ({ questionId, body }: { questionId: number; body: string }) =>
      apiFetch(`/api/questions/${questionId}/answer`, { method: 'POST', body: answerInputSchema.parse({ body }), schema: questionResponseSchema }),
    onSuccess: invalidate,
  });
}

/** POST /api/questions/:questionId/hide or /unhide (moderators and admins). */
export function useHideQuestion() {
  const invalidate = useInvalidateQuestions();
  return useMutation({
    mutationFn: ({ questionId, hide, reason }: { questionId: number; hide: boolean; reason?: string }) =>
      hide
        ? apiFetch(`/api/questions/${questionId}/hide`, { method: 'POST', body: hideInputSchema.parse({ reason }), schema: questionResponseSchema })
        : apiFetch(`/api/questions/${questionId}/unhide`, { method: 'POST', body: {}, schema: questionResponseSchema }),
    onSuccess: invalidate,
  });
}
