import { useQuery } from '@tanstack/react-query';
import { Link, useNavigation } from 'react-router-dom';
import { authQueries } from '@/features/auth/api/auth-queries';
import { Button } from '@/components/ui/button';
import { MainNav } from './main-nav';
import { UserMenu } from './user-menu';
import { Wordmark } from './wordmark';

export function SiteHeader() {
  const me = useQuery(authQueries.me());
  return (
    <header className="relative border-b border-rule bg-paper">
      <NavigationProgress />
      <div className="mx-auto flex max-w-page flex-wrap items-center gap-x-6 gap-y-2 px-4 py-3">
        <Link to="/" className="rounded-sm no-underline" aria-label="Benchproof, home">
          <Wordmark />
        </Link>
        <div className="order-last w-full sm:order-none sm:w-auto sm:flex-1">
          <MainNav user={me.data} />
        </div>
        <div className="ml-auto flex items-center" data-print="hide">
          {me.isPending ? (
            <span className="h-8 w-24 rounded-full bg-paper-2" aria-label="Checking your account" role="status" />
          ) : me.isError ? (
            <span className="flex items-center gap-2 text-sm text-ink-muted" role="status">
              Account not checked
              <Button size="sm" variant="quiet" onClick={() => void me.refetch()}>
                Retry
              </Button>
            </span>
          ) : (
            <UserMenu user={me.data} />
          )}
        </div>
      </div>
    </header>
  );
}

/** A thin moving rule under the header while the next page loads. */
function NavigationProgress() {
  const navigation = useNavigation();
  if (navigation.state === 'idle') return null;
  return (
    <div role="status" aria-label="Loading page" className="absolute inset-x-0 bottom-0 h-0.5 overflow-hidden" data-print="hide">
      <div className="h-full w-1/3 animate-scribe bg-accent" />
    </div>
  );
}
