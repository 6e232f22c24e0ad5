import { LoadMore } from '@/components/ui/load-more';
import { useInfiniteQuery } from '@tanstack/react-query';
import type { LoaderFunctionArgs } from 'react-router-dom';
import { requireArea } from '@/features/auth/lib/require-role';
import { ButtonLink } from '@/components/ui/button';
import { EmptyState, ErrorState, LoadingState } from '@/components/ui/data-states';
import { PageHeader } from '@/components/ui/page-header';
import { queryClient } from '@/lib/query-client';
import { buildQueries } from '../api/build-queries';
import { BuildsTable } from '../components/builds-table';

export async function loader({ request }: LoaderFunctionArgs) {
  await requireArea('builds', request);
  // prefetch, not ensure: a failing list shows its own error and retry inside the page.
  await queryClient.prefetchInfiniteQuery(buildQueries.list());
  return null;
}

/** The builder's own builds, newest first, and the way to start a new one. */
export function Component() {
  return (
    <>
      <PageHeader
        title="My builds"
        description="Each build holds its parts, the clips of your bench work and the moments you measured at."
        actions={
          <ButtonLink to="/builds/new" variant="primary">
            New build
          </ButtonLink>
        }
      />
      <BuildsList />
    </>
  );
}

function BuildsList() {
  const builds = useInfiniteQuery(buildQueries.list());

  if (builds.isPending) return <LoadingState label="Loading your builds…" />;
  if (!builds.data) {
    return (
      <ErrorState
        title="Your builds could not be loaded"
        error={builds.error}
        onRetry={() => void builds.refetch()}
        retrying={builds.isRefetching}
      />
    );
  }

  const items = builds.data.pages.flatMap((page) => page.items);
  if (items.length === 0) {
    return (
      <EmptyState
        title="No builds yet"
        action={
          <ButtonLink to="/builds/new" variant="primary">
            Start your first build
          </ButtonLink>
        }
      >
        Start a build for the engine or assembly on your bench: give it a title, say what it is, and list the parts with
        their serial numbers. Then add clips of the work and mark the moments you took each reading.
      </EmptyState>
    );
  }

  return (
    <div className="flex flex-col gap-3">
      <BuildsTable builds={items} />
      <LoadMore query={builds} shown={items.length} what="builds" variant="primary" />
    </div>
  );
}
