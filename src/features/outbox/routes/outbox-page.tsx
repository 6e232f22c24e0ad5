import { useQuery } from '@tanstack/react-query';
import { useSearchParams, type LoaderFunctionArgs } from 'react-router-dom';
import { requireArea } from '@/features/auth/lib/require-role';
import { Button } from '@/components/ui/button';
import { EmptyState, ErrorState, LoadingState } from '@/components/ui/data-states';
import { PageHeader } from '@/components/ui/page-header';
import { formatBytes } from '@/features/clips/lib/clip-format';
import { cn } from '@/lib/cn';
import { queryClient } from '@/lib/query-client';
import { outboxQueries } from '../api/outbox-queries';
import { MessageView, receivedText } from '../components/message-view';

export async function loader({ request }: LoaderFunctionArgs) {
  await requireArea('adminOutbox', request);
  void queryClient.prefetchQuery(outboxQueries.list());
  return null;
}

/** /admin/outbox — the mail the site sent, as the local capture server received it. */
export function Component() {
  const outbox = useQuery(outboxQueries.list());
  const [params, setParams] = useSearchParams();
  const openId = params.get('message');

  const refresh = (
    <Button variant="secondary" size="sm" onClick={() => void outbox.refetch()} loading={outbox.isFetching && !outbox.isPending} loadingText="Refreshing…">
      Refresh
    </Button>
  );

  return (
    <>
      <PageHeader
        eyebrow="Admin"
        title="Outbox"
        description="Mail the site sent while running locally, caught by the capture server before it could leave this machine. Newest first."
        actions={refresh}
      />
      {outbox.isPending ? (
        <LoadingState label="Asking the mail capture server…" />
      ) : !outbox.data ? (
        <ErrorState
          title="The outbox could not be read"
          error={outbox.error}
          whatToDo="The capture server runs alongside the site with npm start. Check that it is still running, then try again."
          onRetry={() => void outbox.refetch()}
          retrying={outbox.isRefetching}
        />
      ) : !outbox.data.capturing ? (
        <EmptyState title="Mail is not captured here">
          This site sends its mail to the configured SMTP server, so it is delivered for real and nothing is kept here. Look in that mail
          server’s own logs to see what was sent.
        </EmptyState>
      ) : outbox.data.items.length === 0 ? (
        <EmptyState title="No mail captured yet" action={refresh}>
          Messages appear here when the site sends one: a story sent for review, changes asked for, a story published (to the builder and to
          each follower). Do one of those, then refresh.
        </EmptyState>
      ) : (
        <div className="grid gap-6 lg:grid-cols-[minmax(0,26rem)_minmax(0,1fr)]">
          <ol className="flex flex-col divide-y divide-rule self-start rounded-md border border-rule" aria-label={`Captured messages, newest first (${outbox.data.items.length})`}>
            {outbox.data.items.map((m) => {
              const open = m.id === openId;
              return (
                <li key={m.id}>
                  <button
                    type="button"
                    aria-current={open || undefined}
                    onClick={() => setParams({ message: m.id }, { replace: true })}
                    className={cn(
                      'grid w-full grid-cols-[minmax(0,1fr)_auto] gap-x-3 px-3 py-2 text-left text-sm hover:bg-paper-2',
                      open && 'bg-accent-wash shadow-[inset_3px_0_0_var(--color-accent)] hover:bg-accent-wash',
                    )}
                    data-outbox-row={m.subject}
                  >
                    <span className="line-clamp-2 min-w-0 font-medium">{m.subject || '(no subject)'}</span>
                    <span className="figures text-xs text-ink-muted">{formatBytes(m.sizeBytes)}</span>
                    <span className="min-w-0 truncate text-xs text-ink-muted">to {m.to.join(', ')}</span>
                    <time dateTime={m.receivedAt} className="figures text-xs text-ink-muted">
                      {receivedText(m.receivedAt)}
                    </time>
                  </button>
                </li>
              );
            })}
          </ol>
          {(() => {
            const message = outbox.data.items.find((m) => m.id === openId);
            return message ? (
              <div className="min-w-0 rounded-lg border border-rule bg-paper p-4">
                <MessageView message={message} headingId="outbox-message" />
              </div>
            ) : (
              <p className="text-sm text-ink-muted">{openId ? 'That message is no longer in the outbox (the capture server keeps the last 500).' : 'Choose a message to read it: both parts and its headers.'}</p>
            );
          })()}
        </div>
      )}
    </>
  );
}
