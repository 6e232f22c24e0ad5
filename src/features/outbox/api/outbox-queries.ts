import { queryOptions } from '@tanstack/react-query';
import { outboxResponseSchema } from '@shared/mail/outbox.schema';
import { apiFetch } from '@/lib/api';

/** Query options for the admin outbox (what the local mail capture server received). */
export const outboxQueries = {
  all: ['outbox'] as const,
  /** Every captured message, newest first; `capturing` is false when real SMTP is configured. */
  list: () =>
    queryOptions({
      queryKey: [...outboxQueries.all, 'list'] as const,
      queryFn: async ({ signal }) => {
        const res = await apiFetch('/api/admin/outbox', { schema: outboxResponseSchema, signal });
        return { ...res, items: [...res.items].sort((a, b) => b.receivedAt.localeCompare(a.receivedAt)) };
      },
    }),
};
