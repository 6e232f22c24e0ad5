import { useMutation, useQueryClient, type InfiniteData } from '@tanstack/react-query';
import {
  changeRoleBodySchema,
  changeRoleResponseSchema,
  type ListUsersResponse,
  type Role,
  type User,
} from '@shared/users/user.schema';
import { authQueries } from '@/features/auth/api/auth-queries';
import { apiFetch } from '@/lib/api';
import { adminUserQueries } from './admin-user-queries';

/** Error code the server sends when the change would leave the site without an admin. */
export const LAST_ADMIN_CODE = 'last_admin';

/** PATCH /api/admin/users/:id { role }. Updates the row in place, then refetches the lists. */
export function useChangeRole() {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: async ({ id, role }: { id: number; role: Role }) => {
      const { user } = await apiFetch(`/api/admin/users/${id}`, {
        method: 'PATCH',
        body: changeRoleBodySchema.parse({ role }),
        schema: changeRoleResponseSchema,
      });
      return user;
    },
    onSuccess: async (user) => {
      queryClient.setQueriesData<InfiniteData<ListUsersResponse>>({ queryKey: adminUserQueries.all }, (data) =>
        data && replaceUser(data, user),
      );
      const me = queryClient.getQueryData(authQueries.me().queryKey);
      await Promise.all([
        queryClient.invalidateQueries({ queryKey: adminUserQueries.all }),
        me?.id === user.id ? queryClient.invalidateQueries({ queryKey: authQueries.all }) : undefined,
      ]);
    },
  });
}

function replaceUser(data: InfiniteData<ListUsersResponse>, user: User): InfiniteData<ListUsersResponse> {
  return {
    ...data,
    pages: data.pages.map((page) => ({
      ...page,
      items: page.items.map((item) => (item.id === user.id ? user : item)),
    })),
  };
}
