import { useEffect, useRef } from 'react';
import type { PublicReading } from '@shared/public/public-story.schema';
import { Button } from '@/components/ui/button';
import { formatTime } from '@/features/clips/lib/clip-format';

/**
 * The clip a reading was taken in, seeking to the reading's moment and playing from there. Muted,
 * so the browser lets it start by itself; the controls are there when it does not.
 */
export function MomentClip({ reading }: { reading: PublicReading }) {
  const ref = useRef<HTMLVideoElement>(null);
  const { moment } = reading;
  const at = moment.atMs / 1000;

  function playFromMoment(video: HTMLVideoElement | null = ref.current) {
    if (!video) return;
    video.currentTime = at;
    // Autoplay may be refused (a browser setting); the reader can press play.
    video.play().catch(() => undefined);
  }

  // The metadata may already be in (a cached clip) before the element is on the page: seek now then.
  useEffect(() => {
    const video = ref.current;
    if (video && video.readyState >= HTMLMediaElement.HAVE_METADATA) playFromMoment(video);
    // Only when the moment changes; playFromMoment reads the latest `at`.
  }, [moment.clipId, moment.atMs]);

  return (
    <figure className="flex flex-col gap-1.5" data-print="hide">
      <video
        // A new moment is a new element, so it seeks again once its metadata is in.
        key={`${moment.clipId}:${moment.atMs}`}
        ref={ref}
        src={moment.clipUrl}
        poster={moment.stillUrl}
        controls
        muted
        playsInline
        preload="metadata"
        onLoadedMetadata={(event) => playFromMoment(event.currentTarget)}
        aria-label={`Clip “${moment.clipTitle}”, from the moment of ${reading.name}`}
        className="aspect-video w-full rounded-md border border-rule bg-ink object-contain"
        data-moment-s={at}
      >
        <track kind="captions" srcLang="en" label="English (from the clip's sound)" src={`/api/public/clips/${moment.clipId}/captions.vtt`} />
      </video>
      <figcaption className="flex flex-wrap items-center justify-between gap-2 text-xs text-ink-muted">
        <span>
          {moment.clipTitle} · moment at <span className="figures text-ink">{formatTime(at)}</span>
        </span>
        <Button variant="secondary" size="sm" className="h-7 px-2 text-xs" onClick={() => playFromMoment()}>
          Play from the moment<span className="sr-only"> of {reading.name}</span>
        </Button>
      </figcaption>
    </figure>
  );
}
