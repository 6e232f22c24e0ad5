import { useId, useState } from 'react';
import { useQueries, useQuery } from '@tanstack/react-query';
import type { Clip, Moment } from '@shared/clips/clip.schema';
import { Button } from '@/components/ui/button';
import { EmptyState, ErrorState, LoadingState } from '@/components/ui/data-states';
import { Dialog, DialogClose, DialogContent } from '@/components/ui/dialog';
import { clipQueries } from '@/features/clips/api/clip-queries';
import { formatTime } from '@/features/clips/lib/clip-format';
import { cn } from '@/lib/cn';

interface MomentChoice {
  moment: Moment;
  clip: Clip;
}

/** The build's moments, clip by clip in timeline order, each with its evidence still. */
export function useBuildMoments(buildId: number) {
  const clips = useQuery(clipQueries.list(buildId));
  const withMoments = (clips.data ?? []).filter((clip) => clip.momentCount > 0);
  const moments = useQueries({ queries: withMoments.map((clip) => clipQueries.moments(clip.id)) });
  const pending = clips.isPending || moments.some((q) => q.isPending);
  const failed = clips.error ?? moments.find((q) => q.error)?.error ?? null;
  const choices: MomentChoice[] = [];
  withMoments.forEach((clip, i) => {
    for (const moment of [...(moments[i]?.data ?? [])].sort((a, b) => a.atMs - b.atMs)) choices.push({ moment, clip });
  });
  const refetch = () => {
    void clips.refetch();
    for (const q of moments) void q.refetch();
  };
  return { pending, failed, choices, refetch };
}

export interface CoverPickerProps {
  moments: ReturnType<typeof useBuildMoments>;
  value: number | null;
  /** The stored cover's still, when the chosen moment is the stored one. */
  storedUrl: string | null;
  storedMomentId: number | null;
  onChange: (momentId: number | null) => void;
}

/** The cover still: one of the build's moments' evidence stills, chosen in a dialog. */
export function CoverPicker({ moments, value, storedUrl, storedMomentId, onChange }: CoverPickerProps) {
  const [open, setOpen] = useState(false);
  const labelId = useId();
  const chosen = moments.choices.find((c) => c.moment.id === value) ?? null;
  const url = chosen?.moment.frameUrl ?? (value !== null && value === storedMomentId ? storedUrl : null);

  return (
    <div className="flex flex-col gap-1">
      <span id={labelId} className="text-sm font-medium text-ink">
        Cover still
      </span>
      <div className="flex items-center gap-3">
        {url ? (
          <img src={url} alt={chosen ? `Cover: ${describe(chosen)}` : 'Cover still'} className="h-14 w-24 rounded-sm border border-rule bg-paper-2 object-cover" />
        ) : (
          <span className="flex h-14 w-24 items-center justify-center rounded-sm border border-dashed border-line text-xs text-ink-muted">{value === null ? 'No cover' : 'Loading…'}</span>
        )}
        <div className="flex flex-wrap gap-1.5">
          <Button size="sm" onClick={() => setOpen(true)} aria-describedby={labelId}>
            {value === null ? 'Choose a still' : 'Change'}
          </Button>
          {value !== null && (
            <Button size="sm" variant="quiet" onClick={() => onChange(null)}>
              Remove cover
            </Button>
          )}
        </div>
      </div>

      <Dialog open={open} onOpenChange={setOpen}>
        <DialogContent
          title="Choose the cover still"
          description="The evidence still of one of this build’s moments. Readers see it at the head of the entry."
          footer={
            <DialogClose asChild>
              <Button variant="quiet">Cancel</Button>
            </DialogClose>
          }
        >
          {moments.pending ? (
            <LoadingState label="Loading the build’s moments…" className="py-4" />
          ) : moments.failed ? (
            <ErrorState title="The moments could not be loaded" error={moments.failed} onRetry={moments.refetch} />
          ) : moments.choices.length === 0 ? (
            <EmptyState title="No moments marked yet">
              Mark moments in the build workspace (play a clip, then “Mark this moment”); each one keeps an evidence still you can use as the cover.
            </EmptyState>
          ) : (
            <ul className="grid max-h-[55dvh] grid-cols-2 gap-2 overflow-auto sm:grid-cols-3" aria-label="Moments with evidence stills">
              {moments.choices.map((choice) => (
                <li key={choice.moment.id}>
                  <button
                    type="button"
                    aria-pressed={choice.moment.id === value}
                    onClick={() => {
                      onChange(choice.moment.id);
                      setOpen(false);
                    }}
                    className={cn(
                      'flex w-full flex-col gap-1 rounded-md border p-1 text-left text-xs hover:bg-paper-2',
                      choice.moment.id === value ? 'border-2 border-ink' : 'border-rule',
                    )}
                  >
                    <img src={choice.moment.frameUrl} alt="" className="aspect-video w-full rounded-sm bg-paper-2 object-cover" loading="lazy" />
                    <span>{describe(choice)}</span>
                    {choice.moment.id === value && <span className="font-semibold">Current cover</span>}
                  </button>
                </li>
              ))}
            </ul>
          )}
        </DialogContent>
      </Dialog>
    </div>
  );
}

function describe({ moment, clip }: MomentChoice): string {
  return `${clip.title} at ${formatTime(moment.atMs / 1000)}${moment.label ? `, ${moment.label}` : ''}`;
}
