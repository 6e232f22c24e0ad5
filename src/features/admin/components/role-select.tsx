import { useState } from 'react';
import { useRevalidator } from 'react-router-dom';
import { roles, type Role, type User } from '@shared/users/user.schema';
import { roleLabels, roleWithArticle } from '@/features/auth/lib/access';
import { ConfirmDialog } from '@/components/ui/dialog';
import { Select } from '@/components/ui/field';
import { useToast } from '@/components/ui/toast';
import { ApiError, errorMessage } from '@/lib/api';
import { LAST_ADMIN_CODE, useChangeRole } from '../api/use-change-role';

/** The role of one account, changed on select. Asks first when admins would demote themselves. */
export function RoleSelect({ user, isSelf }: { user: User; isSelf: boolean }) {
  const changeRole = useChangeRole();
  const revalidator = useRevalidator();
  const { toast } = useToast();
  const [pendingSelfRole, setPendingSelfRole] = useState<Role | null>(null);

  const shownRole = changeRole.isPending ? changeRole.variables.role : user.role;

  function apply(role: Role) {
    changeRole.mutate(
      { id: user.id, role },
      {
        onSuccess: (updated) => {
          setPendingSelfRole(null);
          toast({
            tone: 'success',
            title: 'Role changed',
            description: `@${updated.login} is now ${roleWithArticle(updated.role)}. It applies on their next page load.`,
          });
          // Demoting yourself: re-run the page guard so this page closes to you.
          if (isSelf && updated.role !== 'admin') void revalidator.revalidate();
        },
        onError: (error) => {
          setPendingSelfRole(null);
          const lastAdmin = error instanceof ApiError && error.code === LAST_ADMIN_CODE;
          toast({
            tone: 'error',
            title: `Role of @${user.login} not changed`,
            description: lastAdmin
              ? `${error.message} Make another account admin first.`
              : `${errorMessage(error)} Try again.`,
          });
        },
      },
    );
  }

  return (
    <span className="inline-flex items-center gap-2">
      <Select
        size="sm"
        aria-label={`Role of @${user.login}`}
        value={shownRole}
        disabled={changeRole.isPending}
        onChange={(event) => {
          const role = event.target.value as Role;
          if (role === user.role) return;
          if (isSelf && user.role === 'admin') setPendingSelfRole(role);
          else apply(role);
        }}
        className="w-36"
      >
        {roles.map((role) => (
          <option key={role} value={role}>
            {roleLabels[role]}
          </option>
        ))}
      </Select>
      {changeRole.isPending && (
        <span role="status" className="text-xs text-ink-muted">
          Saving…
        </span>
      )}
      <ConfirmDialog
        open={pendingSelfRole !== null}
        onOpenChange={(open) => !open && setPendingSelfRole(null)}
        title="Remove your own admin role?"
        description={`You would become ${pendingSelfRole ? roleWithArticle(pendingSelfRole) : 'another role'} and lose access to this page at once. Another admin would have to give the role back.`}
        confirmLabel="Remove my admin role"
        confirmVariant="danger"
        pending={changeRole.isPending}
        onConfirm={() => pendingSelfRole && apply(pendingSelfRole)}
      />
    </span>
  );
}
