import { NavLink } from 'react-router-dom';
import type { User } from '@shared/users/user.schema';
import { canOpen, type Area } from '@/features/auth/lib/access';
import { cn } from '@/lib/cn';

interface NavEntry {
  to: string;
  label: string;
  /** Shown only to roles that may open this area; absent = everyone. */
  area?: Area;
  end?: boolean;
}

const entries: NavEntry[] = [
  { to: '/', label: 'Stories', end: true },
  { to: '/calculator', label: 'Calculator' },
  { to: '/builds', label: 'My builds', area: 'builds' },
  { to: '/instruments', label: 'Instruments', area: 'instruments' },
  { to: '/specs', label: 'Specs', area: 'specs' },
  { to: '/review', label: 'Review queue', area: 'review' },
  { to: '/admin/users', label: 'Users', area: 'adminUsers' },
  { to: '/admin/outbox', label: 'Outbox', area: 'adminOutbox' },
];

/** The main navigation; role-gated entries appear only for roles that may open them. */
export function MainNav({ user }: { user: User | null | undefined }) {
  const visible = entries.filter((entry) => !entry.area || canOpen(entry.area, user?.role));
  return (
    // Wraps onto a second line on a narrow screen rather than scrolling sideways out of sight;
    // no overflow box, so the focus ring is never clipped.
    <nav aria-label="Main" data-print="hide" className="-mx-2">
      <ul className="flex flex-wrap items-center gap-x-1 gap-y-0.5 px-2 py-0.5">
        {visible.map((entry) => (
          <li key={entry.to}>
            <NavLink
              to={entry.to}
              end={entry.end}
              className={({ isActive }) =>
                cn(
                  'block border-b-2 px-2 py-1.5 text-sm whitespace-nowrap text-ink no-underline hover:text-ink',
                  isActive ? 'border-ink font-semibold' : 'border-transparent hover:border-rule',
                )
              }
            >
              {entry.label}
            </NavLink>
          </li>
        ))}
      </ul>
    </nav>
  );
}
