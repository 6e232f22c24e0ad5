import type { CapturedMessage } from '@shared/mail/outbox.schema';
import { formatBytes } from '@/features/clips/lib/clip-format';

const dateFormat = new Intl.DateTimeFormat(undefined, { dateStyle: 'medium', timeStyle: 'medium', hourCycle: 'h23' });

/** A header by name, whatever its case (the capture server keeps them lower-case). */
export function headerOf(message: CapturedMessage, name: string): string | null {
  const key = Object.keys(message.headers).find((k) => k.toLowerCase() === name.toLowerCase());
  return key ? (message.headers[key] ?? null) : null;
}

/** When a message arrived, in the viewer's time zone. */
export function receivedText(iso: string): string {
  const at = new Date(iso);
  return Number.isNaN(at.getTime()) ? iso : dateFormat.format(at);
}

/**
 * One captured message: who it went to, its headers (the unsubscribe ones first), the HTML part
 * in a sandboxed frame (no scripts, no same-origin, nothing injected into this page) and the
 * plain-text part as it was sent.
 */
export function MessageView({ message, headingId }: { message: CapturedMessage; headingId: string }) {
  const unsubscribe = headerOf(message, 'List-Unsubscribe');
  const oneClick = headerOf(message, 'List-Unsubscribe-Post');
  const envelopeDiffers = message.envelope.to.join(',') !== message.to.join(',');
  return (
    <article aria-labelledby={headingId} className="flex min-w-0 flex-col gap-4" data-message={message.id}>
      <header>
        <h2 id={headingId} className="text-lg font-semibold break-words">
          {message.subject || '(no subject)'}
        </h2>
        <dl className="mt-2 grid grid-cols-[max-content_minmax(0,1fr)] gap-x-3 gap-y-0.5 text-sm">
          <dt className="text-ink-muted">From</dt>
          <dd className="break-words">{message.from}</dd>
          <dt className="text-ink-muted">To</dt>
          <dd className="break-words">{message.to.join(', ')}</dd>
          {envelopeDiffers && (
            <>
              <dt className="text-ink-muted">Delivered to</dt>
              <dd className="break-words">{message.envelope.to.join(', ')}</dd>
            </>
          )}
          <dt className="text-ink-muted">Received</dt>
          <dd>
            <time dateTime={message.receivedAt}>{receivedText(message.receivedAt)}</time>
          </dd>
          <dt className="text-ink-muted">Size</dt>
          <dd className="figures">{formatBytes(message.sizeBytes)}</dd>
          <dt className="text-ink-muted">List-Unsubscribe</dt>
          <dd className="figures text-xs break-all" data-list-unsubscribe={unsubscribe ?? ''}>
            {unsubscribe ?? <span className="font-sans text-sm text-ink-muted">none (not a message to followers)</span>}
            {oneClick && <span className="block font-sans text-ink-muted">one-click: {oneClick}</span>}
          </dd>
        </dl>
      </header>

      <section aria-labelledby={`${headingId}-html`} className="flex flex-col gap-1">
        <h3 id={`${headingId}-html`} className="text-sm font-semibold">
          HTML part
        </h3>
        {message.html ? (
          <>
            {/* sandbox="" : no scripts, no forms, no navigation, an origin of its own. */}
            <iframe
              title={`HTML part of “${message.subject}”`}
              sandbox=""
              srcDoc={message.html}
              referrerPolicy="no-referrer"
              className="h-96 w-full rounded-md border border-rule bg-white"
            />
            <p className="text-xs text-ink-muted">Shown sandboxed: scripts do not run and links do not open.</p>
          </>
        ) : (
          <p className="text-sm text-ink-muted">This message has no HTML part.</p>
        )}
      </section>

      <section aria-labelledby={`${headingId}-text`} className="flex flex-col gap-1">
        <h3 id={`${headingId}-text`} className="text-sm font-semibold">
          Plain-text part
        </h3>
        <pre className="figures max-h-96 overflow-auto rounded-md border border-rule bg-paper-2 p-3 text-xs whitespace-pre-wrap">{message.text || '(empty)'}</pre>
      </section>

      <details className="rounded-md border border-rule px-3 py-2">
        <summary className="cursor-pointer text-sm font-medium">All headers ({Object.keys(message.headers).length})</summary>
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
