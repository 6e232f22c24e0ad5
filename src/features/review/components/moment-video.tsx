import { useRef } from 'react';
import { formatTime } from '@/features/clips/lib/clip-format';
import { Button } from '@/components/ui/button';
import { LEAD_IN_S, leadInStart } from '../lib/review-format';

/**
 * The clip of a reading, playing from a few seconds before its moment so the moderator sees the
 * instrument being set and read. Muted, so the browser lets it start on its own.
 */
export function MomentVideo({ clipId, atMs, label }: { clipId: number; atMs: number; label: string }) {
  const ref = useRef<HTMLVideoElement>(null);
  const start = leadInStart(atMs);

  function playFromLeadIn() {
    const video = ref.current;
    if (!video) return;
    video.currentTime = start;
    // Autoplay may be refused (a browser setting); the controls are there to start it by hand.
    video.play().catch(() => undefined);
  }

  return (
    <figure className="flex flex-col gap-1.5">
      <video
        // A new moment is a new element, so it seeks again once its metadata is in.
        key={`${clipId}:${atMs}`}
        ref={ref}
        src={`/api/clips/${clipId}/video`}
        controls
        muted
        playsInline
        preload="metadata"
        onLoadedMetadata={playFromLeadIn}
        aria-label={`Clip of ${label}, from ${LEAD_IN_S} seconds before the moment`}
        className="aspect-video w-full rounded-md border border-rule bg-ink object-contain"
        data-lead-in-s={start}
      />
      <figcaption className="flex items-center justify-between gap-2 text-xs text-ink-muted">
        <span>
          Clip · moment at <span className="figures text-ink">{formatTime(atMs / 1000)}</span>, played from{' '}
          <span className="figures">{formatTime(start)}</span>
        </span>
        <Button variant="secondary" size="sm" className="h-7 shrink-0 px-2 text-xs" onClick={playFromLeadIn}>
          Replay<span className="sr-only"> from {formatTime(start)}</span>
        </Button>
      </figcaption>
    </figure>
  );
}
