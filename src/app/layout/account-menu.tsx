import { Link } from 'react-router-dom';
import type { User } from '@shared/users/user.schema';
import { useSignOut } from '@/features/auth/api/use-sign-out';
import { roleLabels } from '@/features/auth/lib/access';
import { Avatar } from '@/components/ui/avatar';
import { Menu, MenuContent, MenuItem, MenuLabel, MenuSeparator, MenuTrigger } from '@/components/ui/menu';

/**
 * The signed-in account menu. Its own module, loaded only once someone is signed in: the menu
 * primitives (positioning, focus trapping, scroll locking) are a large part of the shell's
 * JavaScript, and a reader who is not signed in never opens it.
 */
export default function AccountMenu({ user }: { user: User }) {
  const signOut = useSignOut();
  return (
    <Menu>
      <MenuTrigger
        className="flex items-center gap-2 rounded-full py-0.5 pr-2 pl-0.5 text-sm text-ink hover:bg-paper-2"
        aria-label={`Account: ${user.displayName}`}
      >
        <Avatar name={user.displayName} src={user.avatarUrl} />
        <span className="hidden max-w-40 truncate sm:inline">{user.displayName}</span>
        <svg viewBox="0 0 16 16" className="size-3 text-ink-muted" aria-hidden="true">
          <path d="M4 6l4 4 4-4" fill="none" stroke="currentColor" strokeWidth="1.5" strokeLinecap="round" />
        </svg>
      </MenuTrigger>
      <MenuContent>
        <MenuLabel>
          <span className="block font-semibold text-ink">{user.displayName}</span>
          <span className="figures block text-xs text-ink-muted">@{user.login}</span>
          <span className="mt-1 block text-xs text-ink-muted">
            {roleLabels[user.role]}
            {user.shop ? ` · ${user.shop}` : ''}
          </span>
        </MenuLabel>
        <MenuSeparator />
        {user.role === 'builder' && (
          <MenuItem asChild>
            <Link to={`/builders/${encodeURIComponent(user.login)}`}>Your public profile</Link>
          </MenuItem>
        )}
        <MenuItem asChild>
          <Link to="/account/follows">Follows, e-mail and units</Link>
        </MenuItem>
        {user.role === 'admin' && (
          <MenuItem asChild>
            <Link to="/admin/users">Users and roles</Link>
          </MenuItem>
        )}
        <MenuItem
          disabled={signOut.isPending}
          onSelect={(event) => {
            event.preventDefault();
            signOut.mutate();
          }}
        >
          {signOut.isPending ? 'Signing out…' : 'Sign out'}
        </MenuItem>
      </MenuContent>
    </Menu>
  );
}
