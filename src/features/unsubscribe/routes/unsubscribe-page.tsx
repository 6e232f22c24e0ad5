import { useQuery } from '@tanstack/react-query';
import { useSearchParams } from 'react-router-dom';
import { unsubscribeQuerySchema } from '@shared/mail/outbox.schema';
import { Button, ButtonLink } from '@/components/ui/button';
import { ErrorState, LoadingState } from '@/components/ui/data-states';
import { PageHeader } from '@/components/ui/page-header';
import { ApiError, errorMessage } from '@/lib/api';
import { unsubscribeQueries, useUnsubscribe } from '../api/unsubscribe-queries';

/** /unsubscribe?token=… — the page a follower's e-mail links to; no sign-in needed, the signed link is enough. */
export function Component() {
  const [params] = useSearchParams();
  const parsed = unsubscribeQuerySchema.safeParse({ token: params.get('token') ?? '' });
  return (
    <div className="max-w-prose">
      <PageHeader title="E-mail from builders you follow" documentTitle="Unsubscribe" />
      {parsed.success ? <Unsubscribe token={parsed.data.token} /> : <BadLink />}
    </div>
  );
}

function BadLink({ message }: { message?: string }) {
  return (
    <div role="alert" className="rounded-lg border border-line bg-paper-2/60 px-5 py-6" data-unsubscribe="invalid">
      <h2 className="text-md font-semibold">This unsubscribe link does not work</h2>
      <p className="mt-1 text-sm">
        {message ?? 'The address is missing its token or was cut short, which happens when a long link is copied or wrapped by a mail program.'}
      </p>
      <p className="mt-1 text-sm text-ink-muted">
        Try the link in the e-mail again (the whole of it), or use the one-click “Unsubscribe” your mail program shows beside the sender. Nothing
        was changed.
      </p>
      <div className="mt-4">
        <ButtonLink to="/" variant="secondary">
          Go to stories
        </ButtonLink>
      </div>
    </div>
  );
}

function Unsubscribe({ token }: { token: string }) {
  const info = useQuery(unsubscribeQueries.info(token));
  const stop = useUnsubscribe(token);

  if (info.isPending) return <LoadingState label="Reading the link…" />;
  if (!info.data) {
    if (info.error instanceof ApiError && info.error.code === 'invalid_token') return <BadLink message={info.error.message} />;
    return <ErrorState title="The link could not be checked" error={info.error} onRetry={() => void info.refetch()} retrying={info.isRefetching} />;
  }
  const { builderName, followerName, subscribed } = info.data;

  if (!subscribed) {
    return (
      <div role="status" className="rounded-lg border border-rule bg-paper px-5 py-6" data-unsubscribe="done">
        <h2 className="text-md font-semibold">
          {stop.isSuccess ? 'Done: ' : ''}no more e-mails from {builderName} to {followerName}
        </h2>
        <p className="mt-1 text-sm text-ink-muted">
          {stop.isSuccess ? 'From now on' : 'These e-mails are already off:'} {followerName} gets no e-mail when {builderName} publishes a story.
          Following on the site is unchanged; new stories still show in the stories list.
        </p>
        <div className="mt-4">
          <ButtonLink to="/" variant="secondary">
            Go to stories
          </ButtonLink>
        </div>
      </div>
    );
  }

  return (
    <div className="rounded-lg border border-rule bg-paper px-5 py-6" data-unsubscribe="ask">
      <h2 className="text-md font-semibold">
        Stop e-mails from {builderName} to {followerName}?
      </h2>
      <p className="mt-1 text-sm text-ink-muted">
        {followerName} will no longer get an e-mail when {builderName} publishes a story. Nothing else changes, and no sign-in is needed.
      </p>
      <div className="mt-4 flex flex-wrap items-center gap-3">
        <Button variant="primary" onClick={() => stop.mutate()} loading={stop.isPending} loadingText="Stopping…">
          Stop these e-mails
        </Button>
      </div>
      {stop.isError && (
        <p role="alert" className="mt-3 text-sm text-danger">
          Nothing was changed: {errorMessage(stop.error)} Try the button again in a moment.
        </p>
      )}
    </div>
  );
}
