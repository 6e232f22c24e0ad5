import { lazy, Suspense } from 'react';
import { useLocation } from 'react-router-dom';
import type { User } from '@shared/users/user.schema';
import { signInPath } from '@/features/auth/lib/return-to';
import { ButtonLink } from '@/components/ui/button';

const AccountMenu = lazy(() => import('./account-menu'));

/** "Sign in" when signed out; the account menu when signed in. */
export function UserMenu({ user }: { user: User | null }) {
  const location = useLocation();
  if (!user) {
    if (location.pathname === '/sign-in') return null;
    const returnTo = location.pathname + location.search;
    return (
      <ButtonLink to={signInPath(returnTo)} variant="primary" size="sm">
        Sign in
      </ButtonLink>
    );
  }
  return (
    // The name holds the menu's place while its code arrives, so the header does not jump.
    <Suspense fallback={<span className="hidden max-w-40 truncate py-1 pr-2 pl-10 text-sm text-ink sm:inline">{user.displayName}</span>}>
      <AccountMenu user={user} />
    </Suspense>
  );
}
