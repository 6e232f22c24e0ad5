import { useLocation } from 'react-router-dom';
import { ButtonLink } from '@/components/ui/button';

/** Shown for any address no route matches, and for 404s thrown by loaders. */
export function NotFoundContent() {
  const location = useLocation();
  return (
    <div className="max-w-prose py-6">
      <title>Not found · Benchproof</title>
      <p className="figures text-xs text-ink-muted">404 · not found</p>
      <h1 className="mt-1 text-2xl font-semibold tracking-tight">There is nothing at this address</h1>
      <p className="mt-2 text-base text-ink">
        No page matches <code className="figures rounded-sm bg-paper-2 px-1 text-sm break-all">{location.pathname}</code>.
        The link may be mistyped, or what it pointed to was moved or withdrawn.
      </p>
      <div className="mt-5 flex flex-wrap gap-2">
        <ButtonLink to="/" variant="primary">
          Go to stories
        </ButtonLink>
      </div>
    </div>
  );
}

export function NotFoundPage() {
  return <NotFoundContent />;
}
