import { useEffect, useRef, useState, type KeyboardEvent, type PointerEvent } from 'react';
import type { Clip, Moment } from '@shared/clips/clip.schema';
import { cn } from '@/lib/cn';
import { formatTime, spokenTime } from '../lib/clip-format';

export interface ScrubStripProps {
  clip: Clip;
  duration: number;
  currentTime: number;
  /** Trimmed range; outside it the strip is greyed, not hidden (the original is never cut). */
  from: number;
  to: number;
  moments: Moment[];
  onSeek: (seconds: number, explicit: boolean) => void;
  /** Seconds one step of the arrow keys moves. */
  step?: number;
}

const TILE_MIN_WIDTH = 72;

/**
 * The clip as a row of thumbnails from the server's sprite, with the playhead,
 * the trimmed range and the marked moments. A slider: click or drag to seek,
 * arrow keys step, Page keys jump, Home/End go to the in and out points.
 */
export function ScrubStrip({ clip, duration, currentTime, from, to, moments, onSeek, step = 1 }: ScrubStripProps) {
  const ref = useRef<HTMLDivElement>(null);
  const [tiles, setTiles] = useState(8);
  const [scrubbing, setScrubbing] = useState(false);
  const strip = clip.thumbnails && clip.thumbnailsUrl ? { ...clip.thumbnails, url: clip.thumbnailsUrl } : null;

  useEffect(() => {
    const element = ref.current;
    if (!element) return;
    const observer = new ResizeObserver(([entry]) => {
      const width = entry?.contentRect.width ?? 0;
      setTiles(Math.max(1, Math.floor(width / TILE_MIN_WIDTH)));
    });
    observer.observe(element);
    return () => observer.disconnect();
  }, []);

  const safeDuration = duration > 0 ? duration : 1;
  const pct = (seconds: number) => `${(Math.min(Math.max(seconds, 0), safeDuration) / safeDuration) * 100}%`;

  function timeAt(clientX: number): number {
    const box = ref.current?.getBoundingClientRect();
    if (!box || box.width === 0) return currentTime;
    return Math.min(Math.max((clientX - box.left) / box.width, 0), 1) * duration;
  }

  function onPointerDown(event: PointerEvent<HTMLDivElement>) {
    if (event.button !== 0) return;
    event.currentTarget.setPointerCapture(event.pointerId);
    setScrubbing(true);
    onSeek(timeAt(event.clientX), false);
  }

  function onPointerMove(event: PointerEvent<HTMLDivElement>) {
    if (scrubbing) onSeek(timeAt(event.clientX), false);
  }

  function onKeyDown(event: KeyboardEvent<HTMLDivElement>) {
    const jumps: Record<string, number> = {
      ArrowLeft: -step,
      ArrowDown: -step,
      ArrowRight: step,
      ArrowUp: step,
      PageDown: -5 * step,
      PageUp: 5 * step,
    };
    let target: number | null = null;
    const jump = jumps[event.key];
    if (jump !== undefined) target = currentTime + jump;
    else if (event.key === 'Home') target = from;
    else if (event.key === 'End') target = to;
    if (target === null) return;
    event.preventDefault();
    onSeek(Math.min(Math.max(target, 0), duration), true);
  }

  // Each visible box stands for an equal slice of the clip and shows the sprite tile whose span
  // [n·intervalS, (n+1)·intervalS) holds the slice's middle.
  const visible = strip ? Math.min(tiles, strip.count) : 0;
  const shown = strip
    ? Array.from({ length: visible }, (_, i) =>
        Math.min(strip.count - 1, Math.floor((((i + 0.5) * safeDuration) / visible) / strip.intervalS)),
      )
    : [];

  return (
    <div
      ref={ref}
      role="slider"
      tabIndex={0}
      aria-label="Position in the clip"
      aria-valuemin={0}
      aria-valuemax={Math.round(duration * 10) / 10}
      aria-valuenow={Math.round(currentTime * 10) / 10}
      aria-valuetext={`${spokenTime(currentTime)} of ${spokenTime(duration)}`}
      aria-orientation="horizontal"
      onPointerDown={onPointerDown}
      onPointerMove={onPointerMove}
      onPointerUp={() => setScrubbing(false)}
      onPointerCancel={() => setScrubbing(false)}
      onKeyDown={onKeyDown}
      className="relative h-12 cursor-pointer touch-none overflow-hidden rounded-sm border border-line bg-paper-3 select-none"
    >
      {strip && (
        <div className="absolute inset-0 flex" aria-hidden="true">
          {shown.map((tile, i) => (
            <span
              key={i}
              className="h-full flex-1 border-r border-paper/40 last:border-r-0"
              style={{
                backgroundImage: `url(${strip.url})`,
                // The sprite is one row of `count` tiles: scale it so one tile fills this box, then slide to tile n.
                backgroundSize: `${strip.count * 100}% 100%`,
                backgroundPosition: `${strip.count > 1 ? (tile / (strip.count - 1)) * 100 : 0}% 0`,
              }}
            />
          ))}
        </div>
      )}

      {/* Outside the trimmed range: greyed, and hatched so it reads without colour. */}
      {from > 0 && (
        <span aria-hidden="true" className="absolute inset-y-0 left-0 bg-paper/75 bg-[repeating-linear-gradient(135deg,transparent_0_4px,rgb(42_42_40/0.25)_4px_5px)]" style={{ width: pct(from) }} />
      )}
      {to < duration && (
        <span aria-hidden="true" className="absolute inset-y-0 right-0 bg-paper/75 bg-[repeating-linear-gradient(135deg,transparent_0_4px,rgb(42_42_40/0.25)_4px_5px)]" style={{ left: pct(to) }} />
      )}

      {moments.map((moment) => (
        <span
          key={moment.id}
          aria-hidden="true"
          title={`${formatTime(moment.atMs / 1000)} ${moment.label}`}
          className="absolute top-0 h-2.5 w-0.5 -translate-x-1/2 bg-accent"
          style={{ left: pct(moment.atMs / 1000) }}
        />
      ))}

      <span aria-hidden="true" className={cn('absolute inset-y-0 w-0.5 -translate-x-1/2 bg-ink shadow-[0_0_0_1px_var(--color-paper)]')} style={{ left: pct(currentTime) }} />
    </div>
  );
}
