import { useLayoutEffect, useRef, useState, type DragEvent } from 'react';
import type { Clip } from '@shared/clips/clip.schema';
import { ConfirmDialog } from '@/components/ui/dialog';
import { Button } from '@/components/ui/button';
import { Input } from '@/components/ui/field';
import { useToast } from '@/components/ui/toast';
import { ApiError, errorMessage } from '@/lib/api';
import { cn } from '@/lib/cn';
import { CLIP_IN_USE, useDeleteClip, useReorderClips, useUpdateClip } from '../api/clip-mutations';
import { formatBytes, formatFrameRate, formatResolution, formatTime, isTrimmed, shownRange } from '../lib/clip-format';
import { ClipStatusBadge } from './clip-status';

export interface ClipTimelineProps {
  buildId: number;
  clips: Clip[];
  selectedId: number | null;
  onSelect: (clipId: number) => void;
  /** After a clip is gone, so the page can drop it from the player and refresh counts. */
  onDeleted: (clipId: number) => void;
}

type DropTarget = { id: number; after: boolean };

/**
 * The build's clips in timeline order. Reorder by dragging a card or with
 * Move up / Move down; both save the whole order at once (optimistic, rolled
 * back if the server refuses).
 */
export function ClipTimeline({ buildId, clips, selectedId, onSelect, onDeleted }: ClipTimelineProps) {
  const reorder = useReorderClips(buildId);
  const { toast } = useToast();
  const [dragId, setDragId] = useState<number | null>(null);
  const [dropTarget, setDropTarget] = useState<DropTarget | null>(null);
  const [announcement, setAnnouncement] = useState('');
  const listRef = useRef<HTMLOListElement>(null);
  // After a keyboard move, put focus back on the button (or its twin if it is now disabled).
  const [refocus, setRefocus] = useState<{ id: number; direction: 'up' | 'down' } | null>(null);

  // React moves the card's DOM node when the order changes, which drops focus: put it back after every
  // re-render until the move has settled.
  useLayoutEffect(() => {
    if (!refocus) return;
    const list = listRef.current;
    const find = (direction: string) =>
      list?.querySelector<HTMLButtonElement>(`[data-move="${direction}"][data-clip="${refocus.id}"]`);
    const same = find(refocus.direction);
    const target = same && !same.disabled ? same : find(refocus.direction === 'up' ? 'down' : 'up');
    if (target && document.activeElement !== target) target.focus();
  }, [refocus, clips]);

  function saveOrder(ids: number[], moved: Clip) {
    const position = ids.indexOf(moved.id) + 1;
    setAnnouncement(`Moved “${moved.title}” to position ${position} of ${ids.length}.`);
    reorder.mutate(ids, {
      onSettled: () => setRefocus((current) => (current?.id === moved.id ? null : current)),
      onError: (error) => {
        setAnnouncement(`The new order was not saved; “${moved.title}” is back where it was.`);
        toast({ tone: 'error', title: 'Order not saved', description: `${errorMessage(error)} The clips are back in their old order.` });
      },
    });
  }

  function move(clip: Clip, direction: 'up' | 'down') {
    const ids = clips.map((c) => c.id);
    const from = ids.indexOf(clip.id);
    const to = direction === 'up' ? from - 1 : from + 1;
    if (from < 0 || to < 0 || to >= ids.length) return;
    ids.splice(from, 1);
    ids.splice(to, 0, clip.id);
    setRefocus({ id: clip.id, direction });
    saveOrder(ids, clip);
  }

  function drop(target: DropTarget) {
    const moved = clips.find((c) => c.id === dragId);
    if (!moved || target.id === moved.id) return;
    const ids = clips.map((c) => c.id).filter((id) => id !== moved.id);
    const at = ids.indexOf(target.id) + (target.after ? 1 : 0);
    ids.splice(at, 0, moved.id);
    if (ids.every((id, i) => id === clips[i]?.id)) return;
    saveOrder(ids, moved);
  }

  return (
    <>
      <p className="sr-only" aria-live="polite">
        {announcement}
      </p>
      <ol ref={listRef} aria-label="Clips in timeline order" className="flex flex-col gap-2">
        {clips.map((clip, index) => (
          <ClipCard
            key={clip.id}
            buildId={buildId}
            clip={clip}
            index={index}
            count={clips.length}
            selected={clip.id === selectedId}
            dragging={dragId === clip.id}
            dropMark={dropTarget?.id === clip.id && dragId !== clip.id ? (dropTarget.after ? 'after' : 'before') : null}
            onSelect={() => onSelect(clip.id)}
            onMove={(direction) => move(clip, direction)}
            onDeleted={() => onDeleted(clip.id)}
            onDragStart={(event) => {
              event.dataTransfer.effectAllowed = 'move';
              event.dataTransfer.setData('application/x-benchproof-clip', String(clip.id));
              setDragId(clip.id);
            }}
            onDragEnd={() => {
              setDragId(null);
              setDropTarget(null);
            }}
            onDragOver={(event) => {
              if (dragId === null) return;
              event.preventDefault();
              event.dataTransfer.dropEffect = 'move';
              const box = event.currentTarget.getBoundingClientRect();
              const after = event.clientY > box.top + box.height / 2;
              if (dropTarget?.id !== clip.id || dropTarget.after !== after) setDropTarget({ id: clip.id, after });
            }}
            onDrop={(event) => {
              if (dragId === null) return;
              event.preventDefault();
              if (dropTarget) drop(dropTarget);
              setDragId(null);
              setDropTarget(null);
            }}
          />
        ))}
      </ol>
    </>
  );
}

interface ClipCardProps {
  buildId: number;
  clip: Clip;
  index: number;
  count: number;
  selected: boolean;
  dragging: boolean;
  dropMark: 'before' | 'after' | null;
  onSelect: () => void;
  onMove: (direction: 'up' | 'down') => void;
  onDeleted: () => void;
  onDragStart: (event: DragEvent<HTMLLIElement>) => void;
  onDragEnd: () => void;
  onDragOver: (event: DragEvent<HTMLLIElement>) => void;
  onDrop: (event: DragEvent<HTMLLIElement>) => void;
}

function ClipCard({
  buildId,
  clip,
  index,
  count,
  selected,
  dragging,
  dropMark,
  onSelect,
  onMove,
  onDeleted,
  ...drag
}: ClipCardProps) {
  const [renaming, setRenaming] = useState(false);
  const [confirmDelete, setConfirmDelete] = useState(false);
  const [refusal, setRefusal] = useState<string | null>(null);
  const deleteClip = useDeleteClip(buildId);
  const { toast } = useToast();
  const ready = clip.status === 'ready' && clip.videoUrl !== null;
  const range = shownRange(clip);

  function confirmDeletion() {
    deleteClip.mutate(clip.id, {
      onSuccess: () => {
        setConfirmDelete(false);
        toast({ tone: 'success', title: 'Clip deleted', description: `“${clip.title}” and its moments are gone.` });
        onDeleted();
      },
      onError: (error) => {
        setConfirmDelete(false);
        const inUse = error instanceof ApiError && error.code === CLIP_IN_USE;
        setRefusal(errorMessage(error));
        toast({ tone: 'error', title: inUse ? 'This clip is in use' : 'Clip not deleted', description: errorMessage(error) });
      },
    });
  }

  return (
    <li
      draggable={!renaming}
      {...drag}
      aria-current={selected || undefined}
      className={cn(
        'relative rounded-md border bg-paper p-2 text-sm',
        selected ? 'border-ink shadow-[inset_3px_0_0_var(--color-accent)]' : 'border-rule',
        dragging && 'opacity-50',
      )}
    >
      {dropMark && (
        <span
          aria-hidden="true"
          className={cn('absolute inset-x-0 h-0.5 bg-accent', dropMark === 'before' ? '-top-1.5' : '-bottom-1.5')}
        />
      )}
      <div className="flex gap-2">
        <span aria-hidden="true" title="Drag to reorder" className="flex w-3 shrink-0 cursor-grab items-center text-line">
          <svg viewBox="0 0 6 14" className="w-1.5">
            {[2, 6, 10].map((y) => (
              <g key={y}>
                <circle cx="1" cy={y} r="1" fill="currentColor" />
                <circle cx="5" cy={y} r="1" fill="currentColor" />
              </g>
            ))}
          </svg>
        </span>

        <Poster clip={clip} ready={ready} onSelect={onSelect} selected={selected} />

        <div className="flex min-w-0 flex-1 flex-col gap-1">
          <div className="flex items-start gap-1">
            <span className="figures pt-0.5 text-xs text-ink-muted" aria-hidden="true">
              {index + 1}.
            </span>
            {renaming ? (
              <RenameField buildId={buildId} clip={clip} onDone={() => setRenaming(false)} />
            ) : (
              <h3 className="min-w-0 flex-1 font-medium break-words">
                <span className="sr-only">Clip {index + 1} of {count}: </span>
                {ready ? (
                  // The title opens the clip too: it is where the eye and the pointer go first.
                  <button
                    type="button"
                    onClick={onSelect}
                    className="rounded-sm text-left font-medium break-words text-ink underline decoration-line decoration-1 underline-offset-2 hover:text-accent-strong hover:decoration-accent"
                  >
                    {clip.title}
                    <span className="sr-only"> (open in the player)</span>
                  </button>
                ) : (
                  clip.title
                )}
              </h3>
            )}
          </div>
          <ClipStatusBadge clip={clip} />
          <p className="figures text-xs text-ink-muted">
            {clip.probe ? (
              <>
                {formatTime(clip.probe.durationS)} · {formatResolution(clip.probe)} · {formatFrameRate(clip.probe.frameRate)} ·{' '}
              </>
            ) : null}
            {formatBytes(clip.sizeBytes)}
            {clip.momentCount > 0 && ` · ${clip.momentCount} moment${clip.momentCount === 1 ? '' : 's'}`}
          </p>
          {isTrimmed(clip) && (
            <p className="figures text-xs text-ink">
              Shown {formatTime(range.from)}–{formatTime(range.to)}
            </p>
          )}
          {refusal && (
            <p role="alert" className="flex items-start justify-between gap-2 rounded-sm bg-danger-wash px-2 py-1 text-xs text-danger">
              <span>Not deleted: {refusal}</span>
              <button type="button" className="shrink-0 underline" onClick={() => setRefusal(null)}>
                OK
              </button>
            </p>
          )}
        </div>
      </div>

      <div className="mt-1.5 flex flex-wrap items-center gap-1 border-t border-rule pt-1.5" data-print="hide">
        <Button
          size="sm"
          variant="quiet"
          className="h-7 px-2"
          data-move="up"
          data-clip={clip.id}
          disabled={index === 0}
          onClick={() => onMove('up')}
          aria-label={`Move “${clip.title}” up`}
        >
          <Arrow up /> Up
        </Button>
        <Button
          size="sm"
          variant="quiet"
          className="h-7 px-2"
          data-move="down"
          data-clip={clip.id}
          disabled={index === count - 1}
          onClick={() => onMove('down')}
          aria-label={`Move “${clip.title}” down`}
        >
          <Arrow /> Down
        </Button>
        {!renaming && (
          <Button size="sm" variant="quiet" className="h-7 px-2" onClick={() => setRenaming(true)} aria-label={`Rename “${clip.title}”`}>
            Rename
          </Button>
        )}
        <Button
          size="sm"
          variant="quiet"
          className="ml-auto h-7 px-2 text-danger hover:text-danger"
          onClick={() => {
            setRefusal(null);
            setConfirmDelete(true);
          }}
          aria-label={`Delete “${clip.title}”`}
        >
          Delete
        </Button>
      </div>

      <ConfirmDialog
        open={confirmDelete}
        onOpenChange={setConfirmDelete}
        title={`Delete “${clip.title}”?`}
        description={
          clip.momentCount > 0
            ? `The clip and its files go for good. It has ${clip.momentCount} marked moment${clip.momentCount === 1 ? '' : 's'}; a clip that moments or readings point to is kept, and you will be told why.`
            : 'The clip and its files go for good.'
        }
        confirmLabel="Delete clip"
        confirmVariant="danger"
        pending={deleteClip.isPending}
        onConfirm={confirmDeletion}
      />
    </li>
  );
}

function Poster({ clip, ready, selected, onSelect }: { clip: Clip; ready: boolean; selected: boolean; onSelect: () => void }) {
  const image = clip.posterUrl ? (
    <img src={clip.posterUrl} alt="" className="size-full object-cover" loading="lazy" />
  ) : (
    <span className="flex size-full items-center justify-center text-2xs text-ink-muted">
      {clip.status === 'failed' ? 'No picture' : 'No poster yet'}
    </span>
  );
  const frame = 'relative block aspect-video w-24 shrink-0 self-start overflow-hidden rounded-sm border border-rule bg-paper-3';
  if (!ready) return <span className={frame}>{image}</span>;
  return (
    <button
      type="button"
      onClick={onSelect}
      aria-pressed={selected}
      aria-label={`Open “${clip.title}” in the player`}
      className={cn(frame, 'group cursor-pointer hover:border-ink')}
    >
      {image}
      <span
        aria-hidden="true"
        className="absolute right-1 bottom-1 flex size-5 items-center justify-center rounded-full bg-ink/80 text-paper group-hover:bg-ink"
      >
        <svg viewBox="0 0 10 10" className="size-2.5">
          <path d="M3 2l5 3-5 3z" fill="currentColor" />
        </svg>
      </span>
    </button>
  );
}

function RenameField({ buildId, clip, onDone }: { buildId: number; clip: Clip; onDone: () => void }) {
  const [title, setTitle] = useState(clip.title);
  const [error, setError] = useState<string | null>(null);
  const update = useUpdateClip(buildId);
  const errorId = `rename-${clip.id}-error`;

  function save() {
    const next = title.trim();
    if (!next) {
      setError('Give the clip a title.');
      return;
    }
    if (next === clip.title) return onDone();
    update.mutate(
      { clipId: clip.id, patch: { title: next } },
      { onSuccess: onDone, onError: (e) => setError(`Not renamed: ${errorMessage(e)}`) },
    );
  }

  return (
    <form
      className="flex min-w-0 flex-1 flex-col gap-1"
      onSubmit={(event) => {
        event.preventDefault();
        save();
      }}
    >
      <div className="flex gap-1">
        <Input
          autoFocus
          aria-label="Clip title"
          value={title}
          maxLength={160}
          onChange={(event) => setTitle(event.target.value)}
          onKeyDown={(event) => event.key === 'Escape' && onDone()}
          aria-invalid={error ? true : undefined}
          aria-describedby={error ? errorId : undefined}
          className="h-8 text-sm"
        />
        <Button type="submit" size="sm" variant="primary" loading={update.isPending} className="h-8">
          Save
        </Button>
        <Button size="sm" variant="quiet" onClick={onDone} className="h-8">
          Cancel
        </Button>
      </div>
      {error && (
        <p id={errorId} className="text-xs text-danger">
          {error}
        </p>
      )}
    </form>
  );
}

function Arrow({ up = false }: { up?: boolean }) {
  return (
    <svg viewBox="0 0 10 10" className={cn('size-2.5', up && 'rotate-180')} aria-hidden="true">
      <path d="M5 1v8M1.5 5.5 5 9l3.5-3.5" fill="none" stroke="currentColor" strokeWidth="1.4" strokeLinecap="round" strokeLinejoin="round" />
    </svg>
  );
}
