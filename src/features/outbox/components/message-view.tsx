import type { CapturedMessage } from '@shared/mail/outbox.schema';
import { formatBytes } from '@/features/clips/lib/clip-format';
import { exactTimeSeconds } from '@/lib/dates';


/** A header by name, whatever its case (the capture server keeps them lower-case). */
export function headerOf(message: CapturedMessage, name: string): string | null {
  const key = Object.keys(message.headers).find((k) => k.toLowerCase() === name.toLowerCase());
  return key ? (message.headers[key] ?? null) : null;
}

/** When a message arrived, in the viewer's time zone. */
export function receivedText(iso: string): string {
  return exactTimeSeconds(iso);
}

/**
 * One captured message, opened in its row of the log: to whom and when in one line, then what the
 * reader sees (the HTML in a sandboxed frame: no scripts, no same-origin, nothing injected into
 * this page) beside the text version as it was sent, and the envelope and headers on request.
 */
export function MessageView({ message, headingId }: { message: CapturedMessage; headingId: string }) {
  const unsubscribe = headerOf(message, 'List-Unsubscribe');
  const oneClick = headerOf(message, 'List-Unsubscribe-Post');
  const envelopeDiffers = message.envelope.to.join(',') !== message.to.join(',');
  return (
    <article aria-labelledby={headingId} className="flex min-w-0 flex-col gap-4" data-message={message.id}>
      <header className="flex flex-col gap-1">
        <h2 id={headingId} className="text-lg font-semibold break-words">
          {message.subject || '(no subject)'}
        </h2>
        <p className="text-sm text-ink-muted">
          From <span className="text-ink">{message.from}</span> to <span className="text-ink">{message.to.join(', ')}</span>
          {envelopeDiffers && <> (delivered to {message.envelope.to.join(', ')})</>}, <time dateTime={message.receivedAt}>{receivedText(message.receivedAt)}</time>,{' '}
          <span className="figures">{formatBytes(message.sizeBytes)}</span>.
        </p>
        <p className="text-sm" data-list-unsubscribe={unsubscribe ?? ''}>
          <span className="text-ink-muted">Unsubscribe link: </span>
          {unsubscribe ? <span className="figures text-xs break-all">{unsubscribe}</span> : <span className="text-ink-muted">none (not a message to followers)</span>}
          {oneClick && <span className="block text-ink-muted">One-click header: {oneClick}</span>}
        </p>
      </header>

      <div className="grid gap-4 xl:grid-cols-2">
        <section aria-labelledby={`${headingId}-html`} className="flex min-w-0 flex-col gap-1">
          <h3 id={`${headingId}-html`} className="text-sm font-semibold">
            As the reader sees it
          </h3>
          {message.html ? (
            <>
              {/* sandbox="" : no scripts, no forms, no navigation, an origin of its own. */}
              <iframe
                title={`“${message.subject}” as the reader sees it`}
                sandbox=""
                srcDoc={message.html}
                referrerPolicy="no-referrer"
                className="h-96 w-full rounded-md border border-rule bg-white"
              />
              <p className="text-xs text-ink-muted">Shown sandboxed: scripts do not run and links do not open.</p>
            </>
          ) : (
            <p className="text-sm text-ink-muted">Sent as text only.</p>
          )}
        </section>

        <section aria-labelledby={`${headingId}-text`} className="flex min-w-0 flex-col gap-1">
          <h3 id={`${headingId}-text`} className="text-sm font-semibold">
            Text version
          </h3>
          <pre className="figures h-96 overflow-auto rounded-md border border-rule bg-paper-2 p-3 text-xs whitespace-pre-wrap">{message.text || '(empty)'}</pre>
        </section>
      </div>

      <details className="rounded-md border border-rule px-3 py-2">
        <summary className="cursor-pointer text-sm font-medium">Envelope and headers ({Object.keys(message.headers).length})</summary>
        <dl className="figures mt-2 grid grid-cols-[max-content_minmax(0,1fr)] gap-x-3 gap-y-0.5 text-xs">
          {Object.entries(message.headers).map(([name, value]) => (
            <div key={name} className="contents">
              <dt className="text-ink-muted">{name}</dt>
              <dd className="break-all">{value}</dd>
            </div>
          ))}
        </dl>
      </details>
    </article>
  );
}
