import { infiniteQueryOptions } from '@tanstack/react-query';
import { listUsersResponseSchema, type ListUsersQuery } from '@shared/users/user.schema';
import { apiFetch } from '@/lib/api';

/** Filters of the users list; pagination (`after`) is handled by the infinite query. */
export type AdminUsersFilter = Partial<Pick<ListUsersQuery, 'role' | 'limit'>>;

export const ADMIN_USERS_PAGE_SIZE = 50;

/** Query options for the admin's view of accounts. */
export const adminUserQueries = {
  all: ['admin', 'users'] as const,
  /** Users by ascending id, one keyset page at a time (`nextAfter` → `after`). */
  list: ({ role, limit = ADMIN_USERS_PAGE_SIZE }: AdminUsersFilter = {}) =>
    infiniteQueryOptions({
      queryKey: [...adminUserQueries.all, 'list', { role: role ?? null, limit }] as const,
      queryFn: ({ pageParam, signal }) => {
        const params = new URLSearchParams({ limit: String(limit) });
        if (pageParam !== undefined) params.set('after', String(pageParam));
        if (role) params.set('role', role);
        return apiFetch(`/api/admin/users?${params}`, { schema: listUsersResponseSchema, signal });
      },
      initialPageParam: undefined as number | undefined,
      getNextPageParam: (lastPage) => lastPage.nextAfter ?? undefined,
    }),
};
