import type { Role } from '@shared/users/user.schema';
import { ButtonLink } from '@/components/ui/button';
import { roleLabels, roleWithArticle } from '../lib/access';

function listRoles(roles: readonly Role[]): string {
  const names = roles.map((role) => roleLabels[role].toLowerCase());
  return names.length > 1 ? `${names.slice(0, -1).join(', ')} or ${names.at(-1)}` : (names[0] ?? '');
}

/** A 403 as a page state: which roles may open this, which one you have, and where to go instead. */
export function ForbiddenState({ allowedRoles, role }: { allowedRoles?: readonly Role[]; role?: Role }) {
  return (
    <div role="alert" className="rounded-lg border border-line bg-paper-2/60 px-5 py-6">
      <p className="figures text-xs text-ink-muted">403 · not allowed</p>
      <h1 className="mt-1 text-xl font-semibold">This page is not open to your account</h1>
      <p className="mt-2 max-w-prose text-sm text-ink">
        {allowedRoles && allowedRoles.length > 0
          ? `Only accounts with the ${listRoles(allowedRoles)} role can open it`
          : 'Your role does not include this page'}
        {role ? `; you are ${roleWithArticle(role)}.` : '.'}
      </p>
      <p className="mt-1 max-w-prose text-sm text-ink-muted">
        If you think your role is wrong, ask the site admin to change it. Roles take effect on your next page load.
      </p>
      <div className="mt-4">
        <ButtonLink to="/" variant="secondary">
          Go to stories
        </ButtonLink>
      </div>
    </div>
  );
}
