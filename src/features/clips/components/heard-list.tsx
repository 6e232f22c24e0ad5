import { useId, useMemo, useRef, useState, type KeyboardEvent } from 'react';
import { useQuery } from '@tanstack/react-query';
import type { Clip } from '@shared/clips/clip.schema';
import type { Suggestion } from '@shared/speech/speech.schema';
import { Button } from '@/components/ui/button';
import { LoadingState } from '@/components/ui/data-states';
import { useToast } from '@/components/ui/toast';
import { errorMessage } from '@/lib/api';
import { cn } from '@/lib/cn';
import { useSetSuggestionDismissed } from '../api/clip-mutations';
import { clipQueries } from '../api/clip-queries';
import { formatTime } from '../lib/clip-format';
import { CLEAR_CONFIDENCE, confidenceWord, heardFigureSpoken, heardFigureText, listeningSentence } from '../lib/heard';
import { isShortcut, keyLabel, type HeardShortcuts, type PlayerShortcuts } from '../lib/player-shortcuts';

export interface HeardListProps {
  clip: Clip;
  /** Moves the player to a time (seconds). */
  onSeek: (seconds: number) => void;
  /** Opens the reading form filled in from a proposal; without it the list only shows what was heard. */
  onAccept?: (proposal: Suggestion) => void;
  shortcuts: PlayerShortcuts;
  keys: HeardShortcuts;
}

/** The proposal in a sentence, for the live region: "564.2 thou at 0:04.1, heard “…”, clear". */
function proposalSentence(p: Suggestion): string {
  const how = p.source === 'display' ? 'read off the display' : `heard “${p.text}”`;
  return `${heardFigureSpoken(p)} at ${formatTime(p.atMs / 1000)}, ${how}, ${confidenceWord(p.confidence)}${p.logged ? `, logged as ${p.readingKey ?? 'a reading'}` : ''}`;
}

/**
 * "Heard on this clip": the readings the clip's sound proposes, in time order, each with its
 * time (a button that moves the player there), the figure with its unit, the words heard and how
 * clearly (`CLEAR_CONFIDENCE`). Its builder accepts one (the reading form opens filled in; nothing
 * is stored until that form is saved) or dismisses it (hidden behind "Show dismissed"). With the
 * list focused, the arrows move, Enter or the accept key accepts, Delete or the dismiss key
 * dismisses and the undo key brings back the last dismissal; the letter keys follow the player's
 * shortcut settings (off, or other keys).
 */
export function HeardList({ clip, onSeek, onAccept, shortcuts, keys }: HeardListProps) {
  const query = useQuery(clipQueries.suggestions(clip.id));
  const setDismissed = useSetSuggestionDismissed(clip.id);
  const { toast } = useToast();
  const [showDismissed, setShowDismissed] = useState(false);
  const [selectedId, setSelectedId] = useState<string | null>(null);
  const [announcement, setAnnouncement] = useState('');
  // Dismissed here, latest last: what the undo key brings back.
  const [undoable, setUndoable] = useState<string[]>([]);
  const groupRef = useRef<HTMLDivElement>(null);
  const headingId = useId();
  const hintId = useId();
  const rowId = (id: string) => `heard-${clip.id}-${id}`;
  const canChange = onAccept !== undefined;

  const items = useMemo(() => [...(query.data?.suggestions ?? [])].sort((a, b) => a.atMs - b.atMs || a.id.localeCompare(b.id)), [query.data]);
  const dismissedCount = items.filter((p) => p.dismissed).length;
  const visible = items.filter((p) => showDismissed || !p.dismissed);
  const selected = visible.find((p) => p.id === selectedId) ?? null;

  const toggle = useRef(false);
  function say(text: string) {
    // A different string each time, so the same words twice are still read out.
    toggle.current = !toggle.current;
    setAnnouncement(toggle.current ? `${text}\u200b` : text);
  }

  function select(p: Suggestion | undefined, announce = true) {
    if (!p) return;
    setSelectedId(p.id);
    if (announce) say(`${visible.indexOf(p) + 1} of ${visible.length}: ${proposalSentence(p)}.`);
    document.getElementById(rowId(p.id))?.scrollIntoView({ block: 'nearest' });
  }

  function accept(p: Suggestion) {
    if (!onAccept) return;
    setSelectedId(p.id);
    onAccept(p);
  }

  function dismiss(p: Suggestion) {
    if (!canChange || p.dismissed) return;
    // The next one takes its place in the selection (the one before when it was the last).
    const at = visible.indexOf(p);
    const next = showDismissed ? p : (visible[at + 1] ?? visible[at - 1]);
    setSelectedId(next?.id ?? null);
    // Its row goes from the list: focus inside it (its Dismiss button) moves to the list, not to the page.
    if (!showDismissed && document.getElementById(rowId(p.id))?.contains(document.activeElement)) groupRef.current?.focus();
    setUndoable((list) => [...list.filter((id) => id !== p.id), p.id]);
    say(`Dismissed ${heardFigureSpoken(p)} at ${formatTime(p.atMs / 1000)}.${shortcuts.enabled ? ` Press ${keyLabel(keys.undo)} to bring it back.` : ''}`);
    setDismissed.mutate(
      { suggestionId: p.id, dismissed: true },
      {
        onError: (error) => {
          setUndoable((list) => list.filter((id) => id !== p.id));
          toast({ tone: 'error', title: 'Not dismissed', description: `${errorMessage(error)} It is back in the list.` });
        },
      },
    );
  }

  function bringBack(p: Suggestion) {
    if (!canChange || !p.dismissed) return;
    setUndoable((list) => list.filter((id) => id !== p.id));
    setSelectedId(p.id);
    say(`Brought back ${heardFigureSpoken(p)} at ${formatTime(p.atMs / 1000)}.`);
    setDismissed.mutate(
      { suggestionId: p.id, dismissed: false },
      { onError: (error) => toast({ tone: 'error', title: 'Not brought back', description: `${errorMessage(error)} It stays dismissed.` }) },
    );
  }

  function undoLast() {
    const id = [...undoable].reverse().find((u) => items.some((p) => p.id === u && p.dismissed));
    const p = items.find((x) => x.id === id);
    if (!p) return say('No dismissal to undo.');
    bringBack(p);
  }

  function onKeyDown(event: KeyboardEvent<HTMLDivElement>) {
    const target = event.target as HTMLElement;
    if (target.closest('input, textarea, select, [contenteditable="true"]')) return;
    if (event.ctrlKey || event.altKey || event.metaKey) return;
    const onList = target === event.currentTarget;
    const current = selected ?? visible[0];
    let handled = true;
    if (event.key === 'ArrowDown' || event.key === 'ArrowUp') {
      const at = current ? visible.indexOf(current) : -1;
      const to = selected ? at + (event.key === 'ArrowDown' ? 1 : -1) : 0;
      select(visible[Math.min(Math.max(to, 0), visible.length - 1)]);
      // Back onto the list, so the keys that follow act on what is selected.
      if (!onList) groupRef.current?.focus();
    } else if (event.key === 'Home' && onList) select(visible[0]);
    else if (event.key === 'End' && onList) select(visible.at(-1));
    // Enter and Delete on a button inside a row are that button's.
    else if (event.key === 'Enter' && onList && current && canChange) accept(current);
    else if (event.key === 'Delete' && onList && current && canChange) {
      if (current.dismissed) bringBack(current);
      else dismiss(current);
    } else if (shortcuts.enabled && canChange && isShortcut(event, keys.accept) && current) accept(current);
    else if (shortcuts.enabled && canChange && isShortcut(event, keys.dismiss) && current && !current.dismissed) dismiss(current);
    else if (shortcuts.enabled && canChange && isShortcut(event, keys.undo)) undoLast();
    else handled = false;
    if (!handled) return;
    event.preventDefault();
    // The list's keys are the list's: the player around it does not also take them (its M and R).
    event.stopPropagation();
  }

  const hint = !canChange
    ? 'A time moves the player there.'
    : shortcuts.enabled
      ? `With the list focused: ↑ and ↓ choose; ${keyLabel(keys.accept)} or Enter accepts (the reading form opens filled in; nothing is saved until you save it there), ${keyLabel(keys.dismiss)} or Delete dismisses, ${keyLabel(keys.undo)} brings back the last dismissed. A time moves the player there.`
      : 'With the list focused: ↑ and ↓ choose, Enter accepts (the reading form opens filled in; nothing is saved until you save it there), Delete dismisses. Single-key shortcuts are off. A time moves the player there.';

  let body;
  if (query.isPending) body = <LoadingState label="Loading what was heard in this clip…" className="py-3" />;
  else if (!query.data)
    body = (
      <p role="alert" className="flex flex-wrap items-center gap-2 text-sm text-danger">
        <span>What was heard could not be loaded: {errorMessage(query.error)}</span>
        <Button size="sm" variant="secondary" className="h-7" onClick={() => void query.refetch()} loading={query.isRefetching}>
          Try again
        </Button>
      </p>
    );
  else {
    const state = query.data.state;
    const status = state !== 'done' || items.length === 0 ? listeningSentence(state) : null;
    body = (
      <>
        {status && (
          <p className="text-sm text-ink-muted" data-listening={state}>
            {status}
          </p>
        )}
        {items.length > 0 && (
          <>
            <div
              ref={groupRef}
              role="group"
              tabIndex={0}
              aria-label={`Readings heard on ${clip.title}`}
              aria-describedby={hintId}
              onKeyDown={onKeyDown}
              onFocus={(event) => {
                if (event.target === event.currentTarget && !selected && visible[0]) select(visible[0]);
              }}
              data-heard-list=""
              className="rounded-md border border-rule focus:outline-2 focus:outline-offset-2 focus:outline-accent"
            >
              {visible.length === 0 ? (
                <p className="px-2 py-2 text-sm text-ink-muted">Every figure heard here is dismissed.</p>
              ) : (
                <ol className="flex flex-col divide-y divide-rule">
                  {visible.map((p) => (
                    <HeardRow
                      key={p.id}
                      id={rowId(p.id)}
                      proposal={p}
                      selected={selected?.id === p.id}
                      canChange={canChange}
                      shortcuts={shortcuts}
                      keys={keys}
                      busy={setDismissed.isPending && setDismissed.variables?.suggestionId === p.id}
                      onSeek={() => {
                        select(p, false);
                        onSeek(p.atMs / 1000);
                      }}
                      onFocusInside={() => setSelectedId(p.id)}
                      onAccept={() => accept(p)}
                      onDismiss={() => dismiss(p)}
                      onBringBack={() => bringBack(p)}
                    />
                  ))}
                </ol>
              )}
            </div>
            <div className="flex flex-wrap items-start justify-between gap-x-3 gap-y-1">
              <p id={hintId} className="min-w-0 flex-1 basis-64 text-xs text-ink-muted">
                {hint}
              </p>
              {dismissedCount > 0 && (
                <Button size="sm" variant="quiet" className="-my-1 h-7 px-2 text-xs" aria-pressed={showDismissed} onClick={() => setShowDismissed((v) => !v)}>
                  {showDismissed ? `Hide dismissed (${dismissedCount})` : `Show dismissed (${dismissedCount})`}
                </Button>
              )}
            </div>
          </>
        )}
      </>
    );
  }

  return (
    <section aria-labelledby={headingId} className="flex flex-col gap-2" data-heard="">
      <h3 id={headingId} className="text-sm font-semibold">
        Heard on this clip
        {query.data?.displayRegion && ' and read off its display'}
        {items.length > 0 && <span className="figures font-normal text-ink-muted"> · {items.length - dismissedCount}</span>}
      </h3>
      {body}
      <span className="sr-only" aria-live="polite">
        {announcement}
      </span>
    </section>
  );
}

function HeardRow({
  id,
  proposal: p,
  selected,
  canChange,
  shortcuts,
  keys,
  busy,
  onSeek,
  onFocusInside,
  onAccept,
  onDismiss,
  onBringBack,
}: {
  id: string;
  proposal: Suggestion;
  selected: boolean;
  canChange: boolean;
  shortcuts: PlayerShortcuts;
  keys: HeardShortcuts;
  busy: boolean;
  onSeek: () => void;
  onFocusInside: () => void;
  onAccept: () => void;
  onDismiss: () => void;
  onBringBack: () => void;
}) {
  const time = formatTime(p.atMs / 1000);
  const figure = heardFigureText(p);
  const clear = confidenceWord(p.confidence);
  const name = `${heardFigureSpoken(p)} at ${time}`;
  return (
    <li
      id={id}
      aria-current={selected || undefined}
      onFocus={onFocusInside}
      data-proposal={p.id}
      data-selected={selected || undefined}
      className={cn(
        'flex flex-col gap-1 px-2 py-1.5 text-sm',
        selected && 'bg-accent-wash/60 shadow-[inset_3px_0_0_var(--color-accent)]',
        p.dismissed && 'text-ink-muted',
      )}
    >
      <div className="flex min-w-0 flex-wrap items-baseline gap-x-2 gap-y-0.5">
        <button
          type="button"
          onClick={onSeek}
         
          className="figures shrink-0 rounded-sm px-1 text-sm whitespace-nowrap text-accent underline decoration-1 underline-offset-2 hover:text-accent-strong"
          aria-label={`Go to ${time} in the player`}
        >
          {time}
        </button>
        <span className="figures font-medium break-words text-ink" data-heard-figure="">
          {figure}
        </span>
        <span
          className={cn('inline-flex items-center gap-1 text-xs', clear === 'clear' ? 'text-ink-muted' : 'text-verdict-undecided')}
          title={
            p.source === 'display'
              ? `${Math.round(p.confidence * 100)} % of the frames read agreed; clear from ${CLEAR_CONFIDENCE} (our rule)`
              : `The recognizer’s confidence ${p.confidence.toFixed(2)}; clear from ${CLEAR_CONFIDENCE} (our rule)`
          }
          data-heard-confidence=""
        >
          <ConfidenceMark clear={clear === 'clear'} />
          {clear}
        </span>
        {p.logged && (
          <span className="inline-flex items-center gap-1 text-xs text-verdict-conforms" data-heard-logged="">
            <svg viewBox="0 0 10 10" className="size-2.5" aria-hidden="true">
              <path d="M1.5 5.5 4 8l4.5-6" fill="none" stroke="currentColor" strokeWidth="1.6" strokeLinecap="round" strokeLinejoin="round" />
            </svg>
            Logged{p.readingKey ? <> as <span className="figures">{p.readingKey}</span></> : null}
          </span>
        )}
        {p.dismissed && <span className="text-xs italic">Dismissed</span>}
      </div>
      <p className="min-w-0 text-xs break-words text-ink-muted">
        {p.source === 'display' ? (
          <>
            <span className="inline-flex items-center gap-1" data-heard-source="display">
              <DisplayMark />
              Shown on the display
            </span>
            {' · unit as set with its box'}
          </>
        ) : (
          <>
            <span className="sr-only">Words heard: </span>“{p.text}”{!p.unitHeard && ' · unit not said'}
            {p.note && ` · ${p.note}`}
          </>
        )}
      </p>
      {canChange && (
        <div className="-ml-1 flex flex-wrap items-center gap-x-1" role="group" aria-label={`Actions for ${name}`}>
          {!p.dismissed && (
            <Button size="sm" variant="quiet" className="h-7 px-2" onClick={onAccept} aria-label={`Accept ${name}: open the reading form filled in`} aria-keyshortcuts={shortcuts.enabled ? keys.accept : undefined}>
              Accept
              {shortcuts.enabled && (
                <kbd aria-hidden="true" className="figures rounded-sm border border-line px-1 text-2xs">
                  {keyLabel(keys.accept)}
                </kbd>
              )}
            </Button>
          )}
          {p.dismissed ? (
            <Button size="sm" variant="quiet" className="h-7 px-2" onClick={onBringBack} disabled={busy} aria-label={`Bring back ${name}`}>
              Bring back
            </Button>
          ) : (
            <Button size="sm" variant="quiet" className="h-7 px-2" onClick={onDismiss} disabled={busy} aria-label={`Dismiss ${name}`} aria-keyshortcuts={shortcuts.enabled ? keys.dismiss : undefined}>
              Dismiss
              {shortcuts.enabled && (
                <kbd aria-hidden="true" className="figures rounded-sm border border-line px-1 text-2xs">
                  {keyLabel(keys.dismiss)}
                </kbd>
              )}
            </Button>
          )}
        </div>
      )}
    </li>
  );
}

/** Clear: a filled circle; unsure: an open circle with a question mark (never colour alone). */
function ConfidenceMark({ clear }: { clear: boolean }) {
  return clear ? (
    <svg viewBox="0 0 10 10" className="size-2.5" aria-hidden="true">
      <circle cx="5" cy="5" r="4" fill="currentColor" />
    </svg>
  ) : (
    <svg viewBox="0 0 10 10" className="size-2.5" aria-hidden="true">
      <circle cx="5" cy="5" r="4" fill="none" stroke="currentColor" strokeWidth="1.2" />
      <path d="M3.8 4a1.3 1.3 0 1 1 1.7 1.2c-.4.2-.5.4-.5.8" fill="none" stroke="currentColor" strokeWidth="1" strokeLinecap="round" />
      <circle cx="5" cy="7.4" r=".55" fill="currentColor" />
    </svg>
  );
}

/** A small seven-segment "8": the figure was read off the instrument's display. */
function DisplayMark() {
  return (
    <svg viewBox="0 0 8 12" className="h-3 w-2" aria-hidden="true">
      <path d="M1.5 1h5M7 1.5v4M7 6.5v4M1.5 11h5M1 6.5v4M1 1.5v4M1.5 6h5" fill="none" stroke="currentColor" strokeWidth="1.2" strokeLinecap="round" />
    </svg>
  );
}
