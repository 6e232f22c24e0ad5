import { useEffect, useRef } from 'react';
import { formatTime } from '@/features/clips/lib/clip-format';
import { Button } from '@/components/ui/button';
import { LEAD_IN_S, leadInStart } from '../lib/review-format';

/** A request to play the clip with its sound from a time (ms); `n` makes a repeat of the same time a new request. */
export interface ListenRequest {
  ms: number;
  n: number;
}

/**
 * The clip of a reading: it plays the few seconds before its moment, so the moderator sees the
 * instrument being set and read, and stops on the moment itself, the frame of the evidence still
 * beside it. Muted, so the browser lets it start on its own; the controls play on from there.
 * Captions of the clip's sound are there, off until chosen. `listen` (from a press of "Listen
 * from …") plays from a time with the sound on, and does not stop at the moment.
 */
export function MomentVideo({ clipId, atMs, label, listen }: { clipId: number; atMs: number; label: string; listen?: ListenRequest | null }) {
  const ref = useRef<HTMLVideoElement>(null);
  const start = leadInStart(atMs);
  const at = atMs / 1000;
  // True while a lead-up is playing towards the moment; pressing play on the controls after it plays on.
  const holding = useRef(false);

  function playFromLeadIn() {
    const video = ref.current;
    if (!video) return;
    holding.current = true;
    video.currentTime = start;
    // Autoplay may be refused (a browser setting); the controls are there to start it by hand.
    video.play().catch(() => undefined);
  }

  // A request made before this player was shown (another reading's) is not replayed.
  const handled = useRef(listen?.n ?? 0);
  useEffect(() => {
    const video = ref.current;
    if (!listen || !video || listen.n === handled.current) return;
    handled.current = listen.n;
    holding.current = false;
    video.muted = false;
    video.currentTime = listen.ms / 1000;
    video.play().catch(() => undefined);
  }, [listen]);

  function stopAtMoment() {
    const video = ref.current;
    if (!video || !holding.current || video.currentTime < at - 0.02) return;
    holding.current = false;
    video.pause();
    video.currentTime = at;
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
        onTimeUpdate={stopAtMoment}
        onSeeking={() => {
          // A seek by hand ends the lead-up: the moderator is looking around.
          const video = ref.current;
          if (video && holding.current && Math.abs(video.currentTime - start) > 0.05) holding.current = false;
        }}
        aria-label={`Clip of ${label}: the ${LEAD_IN_S} seconds before the moment, stopping on it`}
        className="aspect-video w-full rounded-md border border-rule bg-ink object-contain"
        data-lead-in-s={start}
      >
        <track kind="captions" srcLang="en" label="English (from the clip's sound)" src={`/api/clips/${clipId}/captions.vtt`} />
      </video>
      <figcaption className="flex items-center justify-between gap-2 text-xs text-ink-muted">
        <span>
          Clip · plays from <span className="figures">{formatTime(start)}</span> and stops on the moment at{' '}
          <span className="figures text-ink">{formatTime(at)}</span>, the still’s frame
        </span>
        <Button variant="secondary" size="sm" className="h-7 shrink-0 px-2 text-xs" onClick={playFromLeadIn}>
          Replay<span className="sr-only"> from {formatTime(start)}</span>
        </Button>
      </figcaption>
    </figure>
  );
}
