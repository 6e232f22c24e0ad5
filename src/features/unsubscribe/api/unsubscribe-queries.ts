import { queryOptions, useMutation, useQueryClient } from '@tanstack/react-query';
import { unsubscribeInfoSchema } from '@shared/mail/outbox.schema';
import { apiFetch } from '@/lib/api';

const path = (token: string) => `/api/unsubscribe?${new URLSearchParams({ token })}`;

/** Query options for what an unsubscribe link would stop. */
export const unsubscribeQueries = {
  all: ['unsubscribe'] as const,
  /** Who the token names and whether their e-mail is still on; describing changes nothing. */
  info: (token: string) =>
    queryOptions({
      queryKey: [...unsubscribeQueries.all, token] as const,
      queryFn: ({ signal }) => apiFetch(path(token), { schema: unsubscribeInfoSchema, signal }),
      staleTime: 0,
    }),
};

/** POST /api/unsubscribe?token=: turns the e-mail off (doing it twice is harmless). */
export function useUnsubscribe(token: string) {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: () => apiFetch(path(token), { method: 'POST', schema: unsubscribeInfoSchema }),
    onSuccess: (info) => {
      queryClient.setQueryData(unsubscribeQueries.info(token).queryKey, info);
    },
  });
}
