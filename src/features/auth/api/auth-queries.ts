import { queryOptions } from '@tanstack/react-query';
import type { meResponseSchema, User } from '@shared/users/user.schema';
import { ApiError, apiFetch, type Unparsed } from '@/lib/api';

/** Query options for the signed-in account. */
export const authQueries = {
  all: ['auth'] as const,
  /** The signed-in user, or `null` when signed out (a 401 is an answer, not an error). */
  me: () =>
    queryOptions({
      queryKey: [...authQueries.all, 'me'] as const,
      queryFn: async ({ signal }): Promise<User | null> => {
        try {
          // Every page asks this first, so it is read unparsed (no zod in the first load); the
          // server's tests parse it with meResponseSchema.
          const { user } = await apiFetch<Unparsed<typeof meResponseSchema>>('/api/me', { signal });
          return user;
        } catch (error) {
          if (error instanceof ApiError && error.status === 401) return null;
          throw error;
        }
      },
      staleTime: 5 * 60_000,
    }),
};
