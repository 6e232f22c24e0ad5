import type { ReactNode } from 'react';
import type { ChangesRequested } from '@shared/stories/story.schema';
import { Button } from '@/components/ui/button';
import { errorMessage } from '@/lib/api';
import { WarnIcon } from './claim-evidence';
import { savedTime } from './save-status';

function Notice({ title, children, actions, tone = 'warn' }: { title: ReactNode; children: ReactNode; actions: ReactNode; tone?: 'warn' | 'info' }) {
  return (
    <section
      aria-label={typeof title === 'string' ? title : undefined}
      className={
        tone === 'warn'
          ? 'mb-4 rounded-lg border border-danger/60 border-l-4 bg-danger-wash/50 px-4 py-3'
          : 'mb-4 rounded-lg border border-line border-l-4 border-l-ink bg-paper-2/70 px-4 py-3'
      }
    >
      <h2 className="flex items-center gap-2 text-md font-semibold">
        {tone === 'warn' && <WarnIcon className="size-4 shrink-0 text-danger" />}
        {title}
      </h2>
      <div className="mt-1 max-w-prose text-sm text-ink">{children}</div>
      <div className="mt-3 flex flex-wrap gap-2">{actions}</div>
    </section>
  );
}

/** Another tab or device saved the entry after this one loaded it: never overwrite without a choice. */
export function ConflictNotice({
  showingOther,
  busy,
  error,
  onShowOther,
  onKeepMine,
  onTakeOther,
}: {
  showingOther: boolean;
  busy: 'loading' | 'saving' | null;
  error: unknown;
  onShowOther: () => void;
  onKeepMine: () => void;
  onTakeOther: () => void;
}) {
  return (
    <Notice
      title="Saved elsewhere — your text is kept here"
      actions={
        <>
          {!showingOther && (
            <Button size="sm" onClick={onShowOther} loading={busy === 'loading'} loadingText="Loading the other version…">
              Show the other version beside mine
            </Button>
          )}
          <Button size="sm" variant="primary" onClick={onKeepMine} loading={busy === 'saving'} loadingText="Saving yours…">
            Keep mine and save it as the new version
          </Button>
          {showingOther && (
            <Button size="sm" variant="quiet" onClick={onTakeOther}>
              Use the other version instead of mine
            </Button>
          )}
        </>
      }
    >
      <p>
        This story was saved in another tab or on another device after you opened it here. Nothing was overwritten: your text stays in this editor
        and on this device, and autosave waits until you choose.
      </p>
      {error != null && (
        <p role="alert" className="mt-1 text-danger">
          {errorMessage(error)}
        </p>
      )}
    </Notice>
  );
}

/**
 * The story is back with its builder: the moderator's reason first, in their words, then what
 * they flagged (`children`: each flag with its comment, its still and a box to answer).
 */
export function ChangesRequestedNotice({ changes, children }: { changes: ChangesRequested | null; children: ReactNode }) {
  return (
    <section aria-labelledby="changes-requested-heading" className="mb-4 rounded-lg border border-danger/60 border-l-4 bg-danger-wash/40 px-4 py-3" data-changes-requested="">
      <h2 id="changes-requested-heading" className="flex items-center gap-2 text-md font-semibold">
        <WarnIcon className="size-4 shrink-0 text-danger" />
        A moderator asked for changes
      </h2>
      {changes ? (
        <figure className="mt-2 max-w-prose">
          <blockquote className="border-l-2 border-rule pl-3 text-md text-ink" data-changes-reason="">
            {changes.reason}
          </blockquote>
          <figcaption className="mt-1 text-sm text-ink-muted">
            — {changes.moderatorName}, <time dateTime={changes.at}>{savedTime(changes.at)}</time>
          </figcaption>
        </figure>
      ) : (
        <p className="mt-1 text-sm">The reason was sent to you by e-mail.</p>
      )}
      <p className="mt-2 max-w-prose text-sm">
        Answer each flag below, correct the reading or the text where needed, then send the story for review again.
      </p>
      <div className="mt-3">{children}</div>
    </section>
  );
}

/** This browser kept text that never reached the server (a closed tab, a lost connection). */
export function RestoreOffer({ at, olderBase, onRestore, onDiscard }: { at: string; olderBase: boolean; onRestore: () => void; onDiscard: () => void }) {
  return (
    <Notice
      tone="info"
      title={`Unsaved changes from ${savedTime(at)} are kept on this device`}
      actions={
        <>
          <Button size="sm" variant="primary" onClick={onRestore}>
            Restore them
          </Button>
          <Button size="sm" variant="quiet" onClick={onDiscard}>
            Discard them
          </Button>
        </>
      }
    >
      <p>
        They were not saved before this page was last closed or lost its connection. Restore puts them into the editor, where they save as usual.
        {olderBase && ' The story has been saved since (in another tab or on another device); restoring replaces that version once it saves.'}
      </p>
    </Notice>
  );
}
