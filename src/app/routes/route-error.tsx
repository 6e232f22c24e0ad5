import { isRouteErrorResponse, useRevalidator, useRouteError } from 'react-router-dom';
import { ForbiddenState } from '@/features/auth/components/forbidden-state';
import { readForbiddenData } from '@/features/auth/lib/require-role';
import { ErrorState } from '@/components/ui/data-states';
import { ApiError } from '@/lib/api';
import { Wordmark } from '../layout/wordmark';
import { NotFoundContent } from './not-found-page';

/**
 * A route's code changed since this tab loaded it (a new deploy) or the
 * network dropped while fetching it. Only a full reload helps.
 */
function isChunkLoadError(error: unknown): boolean {
  return (
    error instanceof Error &&
    /dynamically imported module|Importing a module script failed|error loading dynamically imported module/i.test(
      error.message,
    )
  );
}

/** Error element inside the shell: header and footer stay, the page says what happened and what to do. */
export function RouteError() {
  const error = useRouteError();
  const revalidator = useRevalidator();

  if (isRouteErrorResponse(error)) {
    if (error.status === 404) return <NotFoundContent />;
    const forbidden = error.status === 403 ? readForbiddenData(error.data) : null;
    if (error.status === 403) {
      return (
        <>
          <title>Not allowed · Benchproof</title>
          <ForbiddenState allowedRoles={forbidden?.allowedRoles} role={forbidden?.role} />
        </>
      );
    }
  }

  if (error instanceof ApiError && error.status === 403) return <ForbiddenState />;

  if (isChunkLoadError(error)) {
    return (
      <ErrorState
        title="This page could not be loaded"
        whatToDo="Benchproof may have been updated since this tab opened, or the connection dropped. Reload the page to get the current version."
        onRetry={() => window.location.reload()}
        retryLabel="Reload the page"
      />
    );
  }

  if (import.meta.env.DEV) console.error(error);
  return (
    <>
      <title>Something went wrong · Benchproof</title>
      <ErrorState
        title="This page ran into a problem"
        error={error instanceof ApiError ? error : undefined}
        whatToDo={
          error instanceof ApiError
            ? undefined
            : 'Nothing you saved is affected. Try again; if it keeps happening, reload the page or go back to stories.'
        }
        onRetry={() => void revalidator.revalidate()}
        retrying={revalidator.state === 'loading'}
      />
    </>
  );
}

/** Error element for the root route, when even the shell could not render. */
export function RootError() {
  return (
    <div className="mx-auto max-w-page px-4 py-6">
      <a href="/" className="no-underline" aria-label="Benchproof, home">
        <Wordmark />
      </a>
      <main className="mt-8">
        <RouteError />
      </main>
    </div>
  );
}
