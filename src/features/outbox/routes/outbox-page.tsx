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
        // A log, one line per message, newest first; a line opens in place, under itself.
        <div className="flex flex-col gap-2">
          {openId && !outbox.data.items.some((m) => m.id === openId) && (
            <p className="text-sm text-ink-muted">That message is no longer in the outbox (the capture server keeps the last 500).</p>
          )}
          <ol className="flex flex-col gap-1.5" aria-label={`Captured messages, newest first (${outbox.data.items.length})`}>
            {outbox.data.items.map((m) => {
              const open = m.id === openId;
              return (
                <li key={m.id} className={cn('rounded-md border bg-paper', open ? 'border-ink' : 'border-rule')}>
                  <button
                    type="button"
                    aria-expanded={open}
                    onClick={() => setParams(open ? {} : { message: m.id }, { replace: true })}
                    className="grid w-full gap-x-4 px-3 py-2 text-left text-sm hover:bg-paper-2 sm:grid-cols-[11.5rem_minmax(0,14rem)_minmax(0,1fr)_auto]"
                    data-outbox-row={m.subject}
                  >
                    <time dateTime={m.receivedAt} className="figures text-xs text-ink-muted sm:pt-0.5">
                      {receivedText(m.receivedAt)}
                    </time>
                    <span className="min-w-0 truncate text-ink-muted">{m.to.join(', ')}</span>
                    <span className="min-w-0 font-medium">{m.subject || '(no subject)'}</span>
                    <span className="figures text-xs text-ink-muted sm:pt-0.5">{formatBytes(m.sizeBytes)}</span>
                  </button>
                  {open && (
                    <div className="border-t border-rule p-4">
                      <MessageView message={m} headingId="outbox-message" />
                    </div>
                  )}
                </li>
              );
            })}
          </ol>
        </div>
      )}
    </>
  );
}
