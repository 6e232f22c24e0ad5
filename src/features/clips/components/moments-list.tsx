import { useState } from 'react';
import type { UseQueryResult } from '@tanstack/react-query';
import type { Clip, Moment } from '@shared/clips/clip.schema';
import { Button } from '@/components/ui/button';
import { ConfirmDialog } from '@/components/ui/dialog';
import { EmptyState, ErrorState, LoadingState } from '@/components/ui/data-states';
import { Input } from '@/components/ui/field';
import { useToast } from '@/components/ui/toast';
import { errorMessage } from '@/lib/api';
import { useDeleteMoment, useUpdateMoment } from '../api/clip-mutations';
import { formatTime, frameIndexAt } from '../lib/clip-format';

export interface MomentsListProps {
  clip: Clip;
  query: UseQueryResult<Moment[]>;
  fps: number;
  onSeek: (seconds: number) => void;
  onPlayFrom: (seconds: number) => void;
  leadInS: number;
  /** Opens the reading form on a moment; without it the rows have no "Log a reading" button. */
  onLogReading?: (moment: Moment) => void;
}

/**
 * Where a moment lands when nudged by `frames`: the middle of that frame (frame boundaries are
 * where the container's rounding decides which frame shows), kept inside the clip.
 */
export function nudgedAtMs(atMs: number, frames: number, fps: number, durationMs: number): number {
  const index = frameIndexAt(atMs / 1000, fps) + frames;
  return Math.min(Math.max(0, Math.round(((index + 0.5) / fps) * 1000)), durationMs);
}

/** The clip's marked moments by time: label, evidence still, nudge by a frame, play into it, delete. */
export function MomentsList({ clip, query, fps, onSeek, onPlayFrom, leadInS, onLogReading }: MomentsListProps) {
  let body;
  if (query.isPending) body = <LoadingState label="Loading the moments of this clip…" className="py-4" />;
  else if (!query.data)
    body = (
      <ErrorState
        title="The moments could not be loaded"
        error={query.error}
        onRetry={() => void query.refetch()}
        retrying={query.isRefetching}
      />
    );
  else if (query.data.length === 0)
    body = (
      <EmptyState title="No moments marked in this clip">
        Play or step to the frame where you read the instrument, then press “Mark this moment” (or M). Each moment keeps an
        evidence still of that exact frame.
      </EmptyState>
    );
  else {
    const sorted = [...query.data].sort((a, b) => a.atMs - b.atMs);
    body = (
      <ol aria-label={`Moments in ${clip.title}`} className="flex flex-col divide-y divide-rule rounded-md border border-rule">
        {sorted.map((moment, index) => (
          <MomentRow
            key={moment.id}
            moment={moment}
            index={index}
            clip={clip}
            fps={fps}
            onSeek={onSeek}
            onPlayFrom={onPlayFrom}
            leadInS={leadInS}
            onLogReading={onLogReading}
          />
        ))}
      </ol>
    );
  }

  return (
    <section aria-labelledby={`moments-${clip.id}`} className="flex flex-col gap-2">
      <h3 id={`moments-${clip.id}`} className="text-sm font-semibold">
        Moments{query.data && query.data.length > 0 && <span className="figures font-normal text-ink-muted"> · {query.data.length}</span>}
      </h3>
      {body}
      {query.isRefetchError && (
        <p role="alert" className="text-xs text-danger">
          The moments could not be refreshed and may be out of date: {errorMessage(query.error)}
        </p>
      )}
    </section>
  );
}

function MomentRow({
  moment,
  index,
  clip,
  fps,
  onSeek,
  onPlayFrom,
  leadInS,
  onLogReading,
}: {
  moment: Moment;
  index: number;
  clip: Clip;
  fps: number;
  onSeek: (seconds: number) => void;
  onPlayFrom: (seconds: number) => void;
  leadInS: number;
  onLogReading?: (moment: Moment) => void;
}) {
  const update = useUpdateMoment(clip.id);
  const remove = useDeleteMoment(clip.id);
  const { toast } = useToast();
  const [label, setLabel] = useState(moment.label);
  const [savedLabel, setSavedLabel] = useState(moment.label);
  const [confirmDelete, setConfirmDelete] = useState(false);
  const [error, setError] = useState<string | null>(null);
  const seconds = moment.atMs / 1000;
  const time = formatTime(seconds);
  const name = moment.label ? `moment ${index + 1} (${moment.label}) at ${time}` : `moment ${index + 1} at ${time}`;
  const durationMs = Math.round((clip.probe?.durationS ?? Infinity) * 1000);

  // Someone saved a new label (here or elsewhere): take it unless the box is being edited.
  if (moment.label !== savedLabel) {
    setSavedLabel(moment.label);
    if (label === savedLabel) setLabel(moment.label);
  }

  function saveLabel() {
    const next = label.trim();
    if (next === moment.label) return;
    setError(null);
    update.mutate(
      { momentId: moment.id, patch: { label: next } },
      { onError: (e) => setError(`Label not saved: ${errorMessage(e)}`) },
    );
  }

  function nudge(frames: number) {
    const atMs = nudgedAtMs(moment.atMs, frames, fps, durationMs);
    setError(null);
    update.mutate(
      { momentId: moment.id, patch: { atMs } },
      {
        onSuccess: (saved) => onSeek(saved.atMs / 1000),
        onError: (e) => setError(`Not moved: ${errorMessage(e)}`),
      },
    );
  }

  return (
    // The still on the left; the time and a label box as wide as the row allows, the actions under them.
    <li className="grid grid-cols-[5rem_minmax(0,1fr)] gap-x-3 gap-y-1.5 px-2 py-2 sm:grid-cols-[6rem_minmax(0,1fr)]">
      <a
        href={moment.frameUrl}
        target="_blank"
        rel="noreferrer"
        className="row-span-2 block self-start overflow-hidden rounded-sm border border-rule bg-paper-3"
      >
        <img
          src={moment.frameUrl}
          alt={`Evidence still at ${time}`}
          loading="lazy"
          className="aspect-video w-full object-cover"
        />
        <span className="sr-only"> (opens full size in a new tab)</span>
      </a>
      <div className="flex min-w-0 flex-wrap items-center gap-x-2 gap-y-1">
        <button
          type="button"
          onClick={() => onSeek(seconds)}
          className="figures shrink-0 rounded-sm px-1 text-sm whitespace-nowrap text-accent underline decoration-1 underline-offset-2 hover:text-accent-strong"
          aria-label={`Go to ${name}`}
        >
          {time}
          <span className="text-2xs text-ink-muted no-underline"> f{frameIndexAt(seconds, fps) + 1}</span>
        </button>
        <form
          className="flex min-w-[min(100%,12rem)] flex-1 items-center gap-1"
          onSubmit={(event) => {
            event.preventDefault();
            saveLabel();
          }}
        >
          <Input
            aria-label={`Label of moment ${index + 1} at ${time}`}
            value={label}
            maxLength={160}
            placeholder="No label"
            onChange={(event) => setLabel(event.target.value)}
            onBlur={saveLabel}
            onKeyDown={(event) => {
              if (event.key === 'Escape') setLabel(moment.label);
            }}
            className="h-8 min-w-0 flex-1 text-sm"
          />
          {label.trim() !== moment.label && (
            <Button type="submit" size="sm" variant="secondary" className="h-8" loading={update.isPending}>
              Save
            </Button>
          )}
        </form>
      </div>
      <div className="-ml-1 flex flex-wrap items-center gap-x-1" role="group" aria-label={`Actions for ${name}`}>
        <Button size="sm" variant="quiet" className="h-7 px-2" onClick={() => nudge(-1)} disabled={update.isPending} aria-label={`Nudge ${name} one frame earlier`}>
          −1 f
        </Button>
        <Button size="sm" variant="quiet" className="h-7 px-2" onClick={() => nudge(1)} disabled={update.isPending} aria-label={`Nudge ${name} one frame later`}>
          +1 f
        </Button>
        {onLogReading && (
          <Button size="sm" variant="quiet" className="h-7 px-2" onClick={() => onLogReading(moment)} aria-label={`Log a reading at ${name}`}>
            Log a reading
          </Button>
        )}
        <Button size="sm" variant="quiet" className="h-7 px-2" onClick={() => onPlayFrom(seconds)} aria-label={`Play ${name} from ${leadInS} seconds before`}>
          Play from −{leadInS} s
        </Button>
        <Button size="sm" variant="quiet" className="h-7 px-2 text-danger hover:text-danger" onClick={() => setConfirmDelete(true)} aria-label={`Delete ${name}`}>
          Delete
        </Button>
      </div>
      {error && (
        <p role="alert" className="col-span-full text-xs text-danger">
          {error}
        </p>
      )}
      <ConfirmDialog
        open={confirmDelete}
        onOpenChange={setConfirmDelete}
        title={`Delete the moment at ${time}?`}
        description={`${moment.label ? `“${moment.label}” and its` : 'Its'} evidence still go. The clip itself stays as it is.`}
        confirmLabel="Delete moment"
        confirmVariant="danger"
        pending={remove.isPending}
        onConfirm={() =>
          remove.mutate(moment.id, {
            onSuccess: () => {
              setConfirmDelete(false);
              toast({ tone: 'success', title: 'Moment deleted', description: `The moment at ${time} is gone.` });
            },
            onError: (e) => {
              setConfirmDelete(false);
              setError(`Not deleted: ${errorMessage(e)}`);
            },
          })
        }
      />
    </li>
  );
}

