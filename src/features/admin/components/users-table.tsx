import type { User } from '@shared/users/user.schema';
import { Avatar } from '@/components/ui/avatar';
import { Badge } from '@/components/ui/badge';
import { Table, TBody, THead, Td, Th, Tr } from '@/components/ui/table';
import { RoleSelect } from './role-select';
import { isoDayOf } from '@/lib/dates';


/** Accounts, one per row, with their role editable in place. */
export function UsersTable({ users, meId }: { users: User[]; meId: number | undefined }) {
  return (
    <Table caption="Accounts and their roles" captionHidden>
      <THead>
        <Tr>
          <Th>Login</Th>
          <Th>Name</Th>
          <Th>Shop</Th>
          <Th>Role</Th>
          <Th numeric>Joined</Th>
        </Tr>
      </THead>
      <TBody>
        {users.map((user) => (
          <Tr key={user.id}>
            <Td mono>
              <span className="inline-flex items-center gap-2">
                <Avatar name={user.displayName} src={user.avatarUrl} size="sm" />@{user.login}
              </span>
            </Td>
            <Td>
              {user.displayName}
              {user.id === meId && (
                <Badge className="ml-2" tone="accent">
                  you
                </Badge>
              )}
            </Td>
            <Td>{user.shop ?? <Missing />}</Td>
            <Td>
              <RoleSelect user={user} isSelf={user.id === meId} />
            </Td>
            <Td numeric>
              <time dateTime={user.createdAt}>{formatDate(user.createdAt)}</time>
            </Td>
          </Tr>
        ))}
      </TBody>
    </Table>
  );
}

function Missing() {
  return (
    <>
      <span aria-hidden="true" className="text-ink-muted">
        —
      </span>
      <span className="sr-only">none given</span>
    </>
  );
}

const formatDate = isoDayOf;
