import type { SaveState } from '../lib/use-story-autosave';
import { cn } from '@/lib/cn';
import { sinceText } from '@/lib/dates';

/** "14:02" today, "2 Dec, 14:02" on another day. */
export const savedTime = sinceText;

/** The autosave state in words. */
export function saveStateWords(state: SaveState): string {
  switch (state.kind) {
    case 'saved':
      return `Saved ${savedTime(state.at)}`;
    case 'saving':
      return 'Saving…';
    case 'unsaved':
      return 'Unsaved changes';
    case 'offline':
      return 'Offline — kept on this device, will save when back';
    case 'conflict':
      return 'Saved elsewhere — your text is kept here';
    case 'invalid':
      return 'Not saved — fix the marked field';
    case 'failed':
      return 'Not saved — kept on this device, trying again';
  }
}

/** The autosave state, plainly, announced politely as it changes. */
export function SaveStatus({ state, onRetry }: { state: SaveState; onRetry: () => void }) {
  const trouble = state.kind === 'conflict' || state.kind === 'invalid' || state.kind === 'failed' || state.kind === 'offline';
  return (
    <div className="flex flex-wrap items-center gap-2">
      <p
        role="status"
        data-save-state={state.kind}
        className={cn(
          'inline-flex items-center gap-1.5 rounded-sm border px-2 py-0.5 text-sm',
          trouble ? 'border-danger/50 bg-danger-wash/60 text-ink' : 'border-rule bg-paper-2/60 text-ink-muted',
        )}
      >
        <StateMark kind={state.kind} />
        {saveStateWords(state)}
      </p>
      {(state.kind === 'failed' || state.kind === 'offline') && (
        <button type="button" onClick={onRetry} className="text-sm text-accent underline underline-offset-2">
          Try now
        </button>
      )}
    </div>
  );
}

function StateMark({ kind }: { kind: SaveState['kind'] }) {
  if (kind === 'saved')
    return (
      <svg viewBox="0 0 16 16" className="size-3.5" aria-hidden="true">
        <path d="M3 8.5l3.2 3L13 4.5" fill="none" stroke="currentColor" strokeWidth="1.8" strokeLinecap="round" strokeLinejoin="round" />
      </svg>
    );
  if (kind === 'saving')
    return (
      <svg viewBox="0 0 16 16" className="size-3.5 animate-spin" aria-hidden="true">
        <circle cx="8" cy="8" r="6" fill="none" stroke="currentColor" strokeOpacity="0.3" strokeWidth="2" />
        <path d="M8 2a6 6 0 0 1 6 6" fill="none" stroke="currentColor" strokeWidth="2" strokeLinecap="round" />
      </svg>
    );
  if (kind === 'unsaved')
    return (
      <svg viewBox="0 0 16 16" className="size-3.5" aria-hidden="true">
        <circle cx="8" cy="8" r="4" fill="currentColor" />
      </svg>
    );
  return (
    <svg viewBox="0 0 16 16" className="size-3.5 text-danger" aria-hidden="true">
      <path d="M8 1.5 15 14.5H1z" fill="none" stroke="currentColor" strokeWidth="1.5" strokeLinejoin="round" />
      <path d="M8 6v4M8 11.6v.8" stroke="currentColor" strokeWidth="1.5" strokeLinecap="round" />
    </svg>
  );
}
