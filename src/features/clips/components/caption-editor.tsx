import { useEffect, useId, useMemo, useRef, useState, type FormEvent, type KeyboardEvent } from 'react';
import { useQuery } from '@tanstack/react-query';
import type { Clip } from '@shared/clips/clip.schema';
import type { EvidenceState } from '@shared/speech/speech.schema';
import { Button } from '@/components/ui/button';
import { LoadingState } from '@/components/ui/data-states';
import { Input } from '@/components/ui/field';
import { useToast } from '@/components/ui/toast';
import { errorMessage } from '@/lib/api';
import { cn } from '@/lib/cn';
import { captionQueries, useCaptionsTrackUrl, useSaveCaptionCorrection, useUndoCaptionCorrections } from '../api/caption-queries';
import { captionRows, correctionForEdit, oneLine, type CaptionRow } from '../lib/caption-rows';
import { formatTime, spokenTime } from '../lib/clip-format';

/**
 * The player's captions track. Its address follows the clip's corrections, so the player loads
 * the captions again after each one. A `<track>` for inside a `<video>`.
 */
export function CaptionsTrack({ clipId }: { clipId: number }) {
  const src = useCaptionsTrackUrl(clipId);
  return <track kind="captions" srcLang="en" label="English (from the clip's sound)" src={src} />;
}

export interface CaptionEditorProps {
  clip: Clip;
  /** The viewer is the clip's builder: only they correct its captions, and for anyone else nothing is shown. */
  canCorrect: boolean;
  /** Moves the player to a time (seconds). */
  onSeek: (seconds: number) => void;
}

/**
 * "Captions", folded away until opened: the clip's caption lines as the captions show them, each
 * with its time (a button that moves the player there). Its builder edits a line in place (Enter
 * saves, Escape cancels; empty means nothing was said there) and undoes a correction. What they
 * type replaces what was heard in the captions, the transcript and the suggested readings.
 */
export function CaptionEditor({ clip, canCorrect, onSeek }: CaptionEditorProps) {
  if (!canCorrect) return null;
  return <CaptionPanel clip={clip} onSeek={onSeek} />;
}

/** Why there are no lines to show, by where listening stands. */
function noCaptionsSentence(state: EvidenceState): string {
  switch (state) {
    case 'queued':
      return 'The clip’s sound is waiting to be listened to; its caption lines will be listed here.';
    case 'running':
      return 'Listening to the clip’s sound now; its caption lines will be listed here.';
    case 'failed':
      return 'The clip’s sound could not be listened to, so it has no captions to correct.';
    case 'off':
      return 'This server has no speech recognizer, so the clip has no captions to correct.';
    case 'done':
      return 'No words were heard in the clip’s sound, so it has no captions to correct.';
  }
}

const rowTime = (row: CaptionRow) => `${formatTime(row.startMs / 1000)}–${formatTime(row.endMs / 1000)}`;

function CaptionPanel({ clip, onSeek }: { clip: Clip; onSeek: (seconds: number) => void }) {
  const [open, setOpen] = useState(false);
  const transcript = useQuery({ ...captionQueries.transcript(clip.id), enabled: open });
  const corrections = useQuery(captionQueries.corrections(clip.id));
  const save = useSaveCaptionCorrection(clip.id);
  const undo = useUndoCaptionCorrections(clip.id);
  const { toast } = useToast();
  const [editing, setEditing] = useState<{ key: string; draft: string; error: string | null } | null>(null);
  const [announcement, setAnnouncement] = useState('');
  // After a save or an undo the lines are cut again: focus goes back to the line now at this time.
  const [focusAtMs, setFocusAtMs] = useState<number | null>(null);
  const listRef = useRef<HTMLOListElement>(null);
  const headingId = useId();
  const bodyId = useId();
  const hintId = useId();
  const rowId = (key: string) => `caption-${clip.id}-${key}`;

  const words = transcript.data?.words;
  const rows = useMemo(() => (words ? captionRows(words, corrections.data ?? []) : []), [words, corrections.data]);
  const correctedCount = corrections.data?.length ?? 0;
  const clipEndMs = clip.probe ? Math.round(clip.probe.durationS * 1000) : null;

  const toggle = useRef(false);
  function say(text: string) {
    // A different string each time, so the same words twice are still read out.
    toggle.current = !toggle.current;
    setAnnouncement(toggle.current ? `${text}\u200b` : text);
  }

  useEffect(() => {
    if (focusAtMs === null || save.isPending || undo.isPending) return;
    const row = rows.find((r) => r.startMs <= focusAtMs && focusAtMs < r.endMs) ?? rows.find((r) => r.startMs >= focusAtMs) ?? rows.at(-1);
    const target = row ? document.querySelector<HTMLElement>(`#${CSS.escape(rowId(row.key))} [data-caption-edit]`) : null;
    (target ?? listRef.current)?.focus();
    setFocusAtMs(null);
  }, [rows, focusAtMs, save.isPending, undo.isPending]);

  function startEditing(row: CaptionRow) {
    setEditing({ key: row.key, draft: row.text, error: null });
  }

  function cancel(row: CaptionRow) {
    setEditing(null);
    setFocusAtMs(row.startMs);
  }

  function submit(row: CaptionRow, event: FormEvent) {
    event.preventDefault();
    if (!editing || !words || save.isPending) return;
    const typed = oneLine(editing.draft);
    if (typed === row.text) return cancel(row);
    const span = correctionForEdit(row, words, typed, clipEndMs);
    save.mutate(span, {
      onSuccess: () => {
        setEditing(null);
        setFocusAtMs(row.startMs);
        say(typed === '' ? `Saved: nothing was said at ${spokenTime(row.startMs / 1000)}.` : `Saved the caption at ${spokenTime(row.startMs / 1000)}: ${typed}.`);
      },
      onError: (error) => setEditing((e) => (e && e.key === row.key ? { ...e, error: errorMessage(error) } : e)),
    });
  }

  function undoRow(row: CaptionRow) {
    const ids = row.corrections.map((c) => c.id);
    if (ids.length === 0 || undo.isPending) return;
    undo.mutate(ids, {
      onSuccess: () => {
        setFocusAtMs(row.startMs);
        say(`Correction undone: the words heard at ${spokenTime(row.startMs / 1000)} are back.`);
      },
      onError: (error) => toast({ tone: 'error', title: 'Correction not undone', description: `${errorMessage(error)} Try again.` }),
    });
  }

  let body;
  if (transcript.isPending) body = <LoadingState label="Loading the captions…" className="py-3" />;
  else if (!transcript.data)
    body = (
      <p role="alert" className="flex flex-wrap items-center gap-2 text-sm text-danger">
        <span>The captions could not be loaded: {errorMessage(transcript.error)}</span>
        <Button size="sm" variant="secondary" className="h-7" onClick={() => void transcript.refetch()} loading={transcript.isRefetching}>
          Try again
        </Button>
      </p>
    );
  else if (rows.length === 0)
    body = (
      <p className="text-sm text-ink-muted" data-listening={transcript.data.state}>
        {noCaptionsSentence(transcript.data.state)}
      </p>
    );
  else
    body = (
      <>
        {corrections.isError && (
          <p role="alert" className="flex flex-wrap items-center gap-2 text-sm text-danger">
            <span>Your corrections could not be loaded, so lines cannot be edited: {errorMessage(corrections.error)}</span>
            <Button size="sm" variant="secondary" className="h-7" onClick={() => void corrections.refetch()} loading={corrections.isRefetching}>
              Try again
            </Button>
          </p>
        )}
        <ol ref={listRef} tabIndex={-1} aria-label={`Caption lines of ${clip.title}`} aria-describedby={hintId} className="flex flex-col divide-y divide-rule rounded-md border border-rule focus:outline-2 focus:outline-offset-2 focus:outline-accent">
          {rows.map((row) => (
            <CaptionLine
              key={row.key}
              id={rowId(row.key)}
              row={row}
              editing={editing?.key === row.key ? editing : null}
              canEdit={corrections.data !== undefined}
              saving={save.isPending && editing?.key === row.key}
              undoing={undo.isPending && undo.variables?.some((id) => row.corrections.some((c) => c.id === id)) === true}
              onSeek={() => onSeek(row.startMs / 1000)}
              onEdit={() => startEditing(row)}
              onDraft={(draft) => setEditing((e) => (e ? { ...e, draft, error: null } : e))}
              onSubmit={(event) => submit(row, event)}
              onCancel={() => cancel(row)}
              onUndo={() => undoRow(row)}
            />
          ))}
        </ol>
        <p id={hintId} className="text-xs text-ink-muted">
          A time moves the player there. What you type replaces what was heard in the captions, the transcript and the suggested readings, and stays if the clip is listened to again.
        </p>
      </>
    );

  return (
    <section aria-labelledby={headingId} className="flex flex-col gap-2" data-captions="">
      <h3 id={headingId} className="text-sm font-semibold">
        <button
          type="button"
          aria-expanded={open}
          aria-controls={bodyId}
          onClick={() => setOpen((v) => !v)}
          className="inline-flex items-center gap-1.5 rounded-sm hover:text-accent-strong"
        >
          <svg viewBox="0 0 10 10" className={cn('size-2.5 transition-transform', open && 'rotate-90')} aria-hidden="true">
            <path d="M3 1.5 7 5l-4 3.5z" fill="currentColor" />
          </svg>
          Captions
          {correctedCount > 0 && (
            <span className="font-normal text-ink-muted">
              {' '}
              · <span className="figures">{correctedCount}</span> corrected
            </span>
          )}
        </button>
      </h3>
      <div id={bodyId} hidden={!open} className="flex flex-col gap-2">
        {open && body}
      </div>
      <span className="sr-only" aria-live="polite">
        {announcement}
      </span>
    </section>
  );
}

function CaptionLine({
  id,
  row,
  editing,
  canEdit,
  saving,
  undoing,
  onSeek,
  onEdit,
  onDraft,
  onSubmit,
  onCancel,
  onUndo,
}: {
  id: string;
  row: CaptionRow;
  editing: { draft: string; error: string | null } | null;
  canEdit: boolean;
  saving: boolean;
  undoing: boolean;
  onSeek: () => void;
  onEdit: () => void;
  onDraft: (draft: string) => void;
  onSubmit: (event: FormEvent) => void;
  onCancel: () => void;
  onUndo: () => void;
}) {
  const fieldId = useId();
  const hintId = useId();
  const errorId = useId();
  const time = formatTime(row.startMs / 1000);
  const corrected = row.corrections.length > 0;
  const name = `the caption at ${time}`;

  function onFieldKeyDown(event: KeyboardEvent<HTMLInputElement>) {
    if (event.key !== 'Escape') return;
    // Escape is this field's: nothing around it (the player, a dialog) also takes it.
    event.preventDefault();
    event.stopPropagation();
    onCancel();
  }

  return (
    <li id={id} data-caption-line="" data-corrected={corrected || undefined} className="flex flex-col gap-1 px-2 py-1.5 text-sm">
      <div className="flex min-w-0 flex-wrap items-baseline gap-x-2 gap-y-0.5">
        <button
          type="button"
          onClick={onSeek}
          className="figures shrink-0 rounded-sm px-1 text-sm whitespace-nowrap text-accent underline decoration-1 underline-offset-2 hover:text-accent-strong"
          aria-label={`Go to ${time} in the player`}
          title={rowTime(row)}
        >
          {time}
        </button>
        {!editing &&
          (row.text === '' ? (
            <span className="text-ink-muted italic">Nothing said here</span>
          ) : (
            <span className="min-w-0 break-words text-ink" data-caption-text="">
              {row.text}
            </span>
          ))}
        {corrected && !editing && (
          <span className="inline-flex items-center gap-1 text-xs text-accent-strong" data-caption-corrected="">
            {/* A scribed line under a caret: the builder's mark, in words as well as shape. */}
            <svg viewBox="0 0 10 10" className="size-2.5" aria-hidden="true">
              <path d="M2 6 5 2.5 8 6M1.5 8.5h7" fill="none" stroke="currentColor" strokeWidth="1.4" strokeLinecap="round" strokeLinejoin="round" />
            </svg>
            corrected
          </span>
        )}
      </div>
      {editing ? (
        <form className="flex flex-col gap-1" onSubmit={onSubmit}>
          <label htmlFor={fieldId} className="sr-only">
            Words said from {rowTime(row)}
          </label>
          <div className="flex flex-wrap items-center gap-1.5">
            <Input
              id={fieldId}
              autoFocus
              value={editing.draft}
              maxLength={500}
              onChange={(event) => onDraft(event.target.value)}
              onKeyDown={onFieldKeyDown}
              aria-describedby={editing.error ? `${hintId} ${errorId}` : hintId}
              aria-invalid={editing.error ? true : undefined}
              className="h-8 min-w-[min(100%,14rem)] flex-1 text-sm"
              data-caption-field=""
            />
            <Button type="submit" size="sm" variant="primary" className="h-8" loading={saving} loadingText="Saving…">
              Save
            </Button>
            <Button size="sm" variant="quiet" className="h-8 px-2" onClick={onCancel} disabled={saving}>
              Cancel
            </Button>
          </div>
          <p id={hintId} className="text-xs text-ink-muted">
            Enter saves, Escape cancels. Leave it empty if nothing was said here.
          </p>
          {editing.error && (
            <p id={errorId} role="alert" className="text-xs text-danger">
              Not saved: {editing.error}
            </p>
          )}
        </form>
      ) : (
        <div className="-ml-1 flex flex-wrap items-center gap-x-1" role="group" aria-label={`Actions for ${name}`}>
          <Button size="sm" variant="quiet" className="h-7 px-2" onClick={onEdit} disabled={!canEdit || undoing} aria-label={`Edit ${name}`} data-caption-edit="">
            Edit
          </Button>
          {corrected && (
            <Button size="sm" variant="quiet" className="h-7 px-2" onClick={onUndo} loading={undoing} loadingText="Undoing…" aria-label={`Undo the correction of ${name}`}>
              Undo correction
            </Button>
          )}
        </div>
      )}
    </li>
  );
}
