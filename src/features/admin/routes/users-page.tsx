import { LoadMore } from '@/components/ui/load-more';
import { useInfiniteQuery, useQuery } from '@tanstack/react-query';
import { useSearchParams, type LoaderFunctionArgs } from 'react-router-dom';
import { roleSchema, roles, type Role } from '@shared/users/user.schema';
import { authQueries } from '@/features/auth/api/auth-queries';
import { roleLabels } from '@/features/auth/lib/access';
import { requireArea } from '@/features/auth/lib/require-role';
import { Button } from '@/components/ui/button';
import { EmptyState, ErrorState, LoadingState } from '@/components/ui/data-states';
import { Field, Select } from '@/components/ui/field';
import { PageHeader } from '@/components/ui/page-header';
import { queryClient } from '@/lib/query-client';
import { adminUserQueries } from '../api/admin-user-queries';
import { UsersTable } from '../components/users-table';

function roleFromSearch(params: URLSearchParams): Role | undefined {
  const parsed = roleSchema.safeParse(params.get('role'));
  return parsed.success ? parsed.data : undefined;
}

export async function loader({ request }: LoaderFunctionArgs) {
  await requireArea('adminUsers', request);
  const role = roleFromSearch(new URL(request.url).searchParams);
  await queryClient.ensureInfiniteQueryData(adminUserQueries.list({ role }));
  return null;
}

export function Component() {
  const [params, setParams] = useSearchParams();
  const role = roleFromSearch(params);

  function setRole(next: Role | undefined) {
    setParams(next ? { role: next } : {}, { replace: true });
  }

  return (
    <>
      <PageHeader
        eyebrow="Admin"
        title="Users and roles"
        description="Everyone who has signed in. Change a role here; it applies on that person’s next page load."
      />
      <div className="mb-4 flex flex-wrap items-end gap-4" data-print="hide">
        <Field label="Show" className="w-48">
          <Select value={role ?? ''} onChange={(event) => setRole(roleSchema.safeParse(event.target.value).data)}>
            <option value="">All roles</option>
            {roles.map((value) => (
              <option key={value} value={value}>
                {roleLabels[value]}s only
              </option>
            ))}
          </Select>
        </Field>
      </div>
      <UsersList role={role} onShowAll={() => setRole(undefined)} />
    </>
  );
}

function UsersList({ role, onShowAll }: { role: Role | undefined; onShowAll: () => void }) {
  const me = useQuery(authQueries.me());
  const users = useInfiniteQuery(adminUserQueries.list({ role }));

  if (users.isPending) return <LoadingState label="Loading accounts…" />;
  const data = users.data;
  if (!data) {
    return (
      <ErrorState
        title="The accounts could not be loaded"
        error={users.error}
        onRetry={() => void users.refetch()}
        retrying={users.isRefetching}
      />
    );
  }

  const items = data.pages.flatMap((page) => page.items);
  if (items.length === 0) {
    return role ? (
      <EmptyState
        title={`No ${roleLabels[role].toLowerCase()} accounts`}
        action={
          <Button variant="secondary" onClick={onShowAll}>
            Show all roles
          </Button>
        }
      >
        Nobody holds this role yet. Find the person under all roles and change theirs.
      </EmptyState>
    ) : (
      <EmptyState title="No accounts yet">
        Accounts appear here after people first sign in with GitHub. Share the site address and ask them to sign in.
      </EmptyState>
    );
  }

  return (
    <div className="flex flex-col gap-3">
      <UsersTable users={items} meId={me.data?.id} />
      <LoadMore query={users} shown={items.length} what="accounts" />
    </div>
  );
}
