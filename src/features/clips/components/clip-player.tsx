import { useCallback, useEffect, useId, useRef, useState, type KeyboardEvent } from 'react';
import { useQuery } from '@tanstack/react-query';
import type { Clip } from '@shared/clips/clip.schema';
import { Button } from '@/components/ui/button';
import { Input } from '@/components/ui/field';
import { useToast } from '@/components/ui/toast';
import { errorMessage } from '@/lib/api';
import { cn } from '@/lib/cn';
import { useCreateMoment } from '../api/clip-mutations';
import { clipQueries } from '../api/clip-queries';
import { formatFrameRate, formatResolution, formatTime, frameDuration, frameIndexAt, spokenTime } from '../lib/clip-format';
import { MomentsList } from './moments-list';
import { ScrubStrip } from './scrub-strip';
import { TrimEditor } from './trim-editor';

/** Seconds "play from before" starts ahead of a moment. */
const LEAD_IN_S = 3;

/** Where the reading form should open: a time, and the moment already marked there if any. */
export interface LogReadingAt {
  atMs: number;
  momentId: number | null;
}

export interface ClipPlayerProps {
  clip: Clip;
  buildId: number;
  /** Bump to move focus into the player (after choosing a clip). */
  focusRequest?: number;
  /** Opens the reading form (button, R, or a moment's "Log a reading"); without it there is none. */
  onLogReading?: (at: LogReadingAt) => void;
  /** Seek here (ms from the start of the original) whenever `seq` changes, once the video can seek. */
  seekRequest?: { atMs: number; seq: number } | null;
}

/**
 * A ready clip at the bench: the native player plus our own controls for
 * exact work (frame steps, jumps, a thumbnail scrub strip), the trimmed range,
 * marking moments (button or M while the player has focus) and logging a
 * reading at the current time (button or R).
 */
export function ClipPlayer({ clip, buildId, focusRequest = 0, onLogReading, seekRequest = null }: ClipPlayerProps) {
  const videoRef = useRef<HTMLVideoElement>(null);
  const regionRef = useRef<HTMLElement>(null);
  const [time, setTime] = useState(clip.trimInS ?? 0);
  const [playing, setPlaying] = useState(false);
  const [mediaDuration, setMediaDuration] = useState<number | null>(null);
  const [announcement, setAnnouncement] = useState('');
  const [hasFocus, setHasFocus] = useState(false);
  const [label, setLabel] = useState('');
  const guardOut = useRef(false);
  const titleId = useId();
  const shortcutId = useId();
  const { toast } = useToast();
  const createMoment = useCreateMoment(clip.id);
  const moments = useQuery(clipQueries.moments(clip.id));

  const fps = clip.probe?.frameRate ?? 1 / frameDuration(clip);
  const frame = frameDuration(clip);
  const duration = clip.probe?.durationS ?? mediaDuration ?? 0;
  const from = clip.trimInS ?? 0;
  const to = clip.trimOutS ?? duration;

  useEffect(() => {
    if (focusRequest > 0) regionRef.current?.focus({ preventScroll: false });
  }, [focusRequest]);

  // A seek asked for before the video knows its length waits for loadedmetadata.
  const pendingSeek = useRef<number | null>(null);
  useEffect(() => {
    if (!seekRequest) return;
    const video = videoRef.current;
    const target = seekRequest.atMs / 1000;
    if (video && video.readyState >= 1) {
      video.pause();
      video.currentTime = target;
      setTime(target);
    } else {
      pendingSeek.current = target;
    }
  }, [seekRequest]);

  const clamp = useCallback((seconds: number) => Math.min(Math.max(seconds, 0), duration || Infinity), [duration]);

  const announceToggle = useRef(false);
  const say = useCallback((text: string) => {
    // A different string each time, so the same time said twice is still read out.
    announceToggle.current = !announceToggle.current;
    setAnnouncement(announceToggle.current ? `${text}\u200b` : text);
  }, []);
  const announce = useCallback(
    (seconds: number) => say(`${spokenTime(seconds)}, frame ${frameIndexAt(seconds, fps) + 1}`),
    [fps, say],
  );

  const seek = useCallback(
    (seconds: number, explicit: boolean) => {
      const video = videoRef.current;
      if (!video) return;
      const target = clamp(seconds);
      video.currentTime = target;
      setTime(target);
      if (explicit) announce(target);
    },
    [clamp, announce],
  );

  // While playing, follow the video frame by frame (timeupdate is only ~4 per second) and stop at the out point.
  useEffect(() => {
    if (!playing) return;
    let handle = 0;
    const tick = () => {
      const video = videoRef.current;
      if (!video) return;
      const now = video.currentTime;
      if (guardOut.current && clip.trimOutS != null && now >= clip.trimOutS) {
        video.pause();
        video.currentTime = clip.trimOutS;
        setTime(clip.trimOutS);
        return;
      }
      setTime(now);
      handle = requestAnimationFrame(tick);
    };
    handle = requestAnimationFrame(tick);
    return () => cancelAnimationFrame(handle);
  }, [playing, clip.trimOutS]);

  function onPlay() {
    const video = videoRef.current;
    if (!video) return;
    // Start again from the in point when play is pressed at (or past) the out point.
    if (clip.trimOutS != null && video.currentTime >= clip.trimOutS - frame / 2) video.currentTime = clip.trimInS ?? 0;
    guardOut.current = clip.trimOutS != null && video.currentTime < clip.trimOutS;
    setPlaying(true);
  }

  function togglePlay() {
    const video = videoRef.current;
    if (!video) return;
    if (video.paused) void video.play().catch(() => undefined);
    else video.pause();
  }

  function stepFrames(count: number) {
    const video = videoRef.current;
    if (!video) return;
    video.pause();
    // Land mid-frame: exact frame boundaries are where rounding in the container decides which frame shows.
    const index = frameIndexAt(video.currentTime, fps) + count;
    seek((index + 0.5) / fps, true);
  }

  function jump(seconds: number) {
    const video = videoRef.current;
    if (!video) return;
    seek(video.currentTime + seconds, true);
  }

  function playFrom(seconds: number) {
    const video = videoRef.current;
    if (!video) return;
    video.currentTime = clamp(seconds);
    void video.play().catch(() => undefined);
  }

  function mark() {
    const video = videoRef.current;
    if (!video || createMoment.isPending) return;
    const at = video.currentTime;
    video.pause();
    const atMs = Math.round(at * 1000);
    createMoment.mutate(
      { atMs, label: label.trim() },
      {
        onSuccess: (moment) => {
          setLabel('');
          say(`Moment marked at ${spokenTime(moment.atMs / 1000)}${moment.label ? `: ${moment.label}` : ''}.`);
        },
        onError: (error) =>
          toast({ tone: 'error', title: 'Moment not marked', description: `${errorMessage(error)} The time was ${formatTime(at)}; try again.` }),
      },
    );
  }

  function logReading() {
    const video = videoRef.current;
    if (!video || !onLogReading) return;
    video.pause();
    const atMs = Math.round(video.currentTime * 1000);
    // A moment already marked on this frame is reused rather than marked twice.
    const frameIndex = frameIndexAt(video.currentTime, fps);
    const existing = moments.data?.find((m) => frameIndexAt(m.atMs / 1000, fps) === frameIndex) ?? null;
    onLogReading({ atMs: existing?.atMs ?? atMs, momentId: existing?.id ?? null });
  }

  function onRegionKeyDown(event: KeyboardEvent<HTMLElement>) {
    const key = event.key.toLowerCase();
    if (key !== 'm' && !(key === 'r' && onLogReading)) return;
    if (event.ctrlKey || event.metaKey || event.altKey) return;
    const target = event.target as HTMLElement;
    if (target.closest('input, textarea, select, [contenteditable="true"]')) return;
    event.preventDefault();
    if (key === 'm') mark();
    else logReading();
  }

  return (
    <section
      ref={regionRef}
      aria-labelledby={titleId}
      aria-describedby={shortcutId}
      tabIndex={-1}
      onKeyDown={onRegionKeyDown}
      onFocus={() => setHasFocus(true)}
      onBlur={(event) => {
        if (!event.currentTarget.contains(event.relatedTarget as Node | null)) setHasFocus(false);
      }}
      className={cn('flex flex-col gap-3 rounded-lg border bg-paper p-3 outline-none', hasFocus ? 'border-ink' : 'border-rule')}
    >
      <header className="flex flex-wrap items-baseline justify-between gap-x-3 gap-y-1">
        <h2 id={titleId} className="text-md font-semibold">
          <span className="sr-only">Player: </span>
          {clip.title}
        </h2>
        {clip.probe && (
          <p className="figures text-xs text-ink-muted">
            {formatTime(clip.probe.durationS)} · {formatResolution(clip.probe)} · {formatFrameRate(clip.probe.frameRate)}
          </p>
        )}
      </header>

      <video
        ref={videoRef}
        key={clip.id}
        controls
        playsInline
        preload="metadata"
        poster={clip.posterUrl ?? undefined}
        className="aspect-video max-h-[60vh] w-full rounded-sm bg-ink"
        onLoadedMetadata={(event) => {
          const video = event.currentTarget;
          if (Number.isFinite(video.duration)) setMediaDuration(video.duration);
          if (pendingSeek.current !== null) {
            video.currentTime = pendingSeek.current;
            setTime(pendingSeek.current);
            pendingSeek.current = null;
          } else if (clip.trimInS != null) video.currentTime = clip.trimInS;
        }}
        onPlay={onPlay}
        onPause={() => {
          setPlaying(false);
          setTime(videoRef.current?.currentTime ?? 0);
        }}
        onEnded={() => setPlaying(false)}
        onSeeked={(event) => setTime(event.currentTarget.currentTime)}
        onTimeUpdate={(event) => {
          if (!playing) setTime(event.currentTarget.currentTime);
        }}
      >
        {clip.videoUrl && <source src={clip.videoUrl} />}
        <track kind="chapters" src={clip.chaptersUrl} label="Chapters" default />
        Your browser cannot play this video. <a href={clip.videoUrl ?? '#'}>Download it</a> instead.
      </video>

      <div className="flex flex-wrap items-center gap-1" role="group" aria-label="Player controls">
        <Button size="sm" variant="primary" onClick={togglePlay} className="w-20" aria-label={playing ? 'Pause' : 'Play'}>
          {playing ? 'Pause' : 'Play'}
        </Button>
        <span className="mx-1 h-6 w-px bg-rule" aria-hidden="true" />
        <Button size="sm" onClick={() => jump(-5)} aria-label="Back 5 seconds">
          −5 s
        </Button>
        <Button size="sm" onClick={() => jump(-1)} aria-label="Back 1 second">
          −1 s
        </Button>
        <Button size="sm" onClick={() => stepFrames(-1)} aria-label="Back one frame (pauses)">
          ◂ frame
        </Button>
        <Button size="sm" onClick={() => stepFrames(1)} aria-label="Forward one frame (pauses)">
          frame ▸
        </Button>
        <Button size="sm" onClick={() => jump(1)} aria-label="Forward 1 second">
          +1 s
        </Button>
        <Button size="sm" onClick={() => jump(5)} aria-label="Forward 5 seconds">
          +5 s
        </Button>
        <p className="ml-auto flex items-baseline gap-2 pl-2">
          <span className="sr-only">Current time</span>
          <span className="figures text-lg text-ink">{formatTime(time)}</span>
          <span className="figures text-xs text-ink-muted">
            / {formatTime(duration)} · frame {frameIndexAt(time, fps) + 1}
          </span>
        </p>
        {/* Read out only after explicit steps and marks, never while playing. */}
        <span className="sr-only" aria-live="polite">
          {announcement}
        </span>
      </div>

      <div className="flex flex-col gap-1">
        <ScrubStrip
          clip={clip}
          duration={duration}
          currentTime={time}
          from={from}
          to={to}
          moments={moments.data ?? []}
          onSeek={(seconds, explicit) => {
            videoRef.current?.pause();
            seek(seconds, explicit);
          }}
        />
        <p className="figures flex justify-between text-2xs text-ink-muted">
          <span>{formatTime(0)}</span>
          <span>
            {clip.trimInS != null || clip.trimOutS != null
              ? `Shown ${formatTime(from)}–${formatTime(to)} (greyed outside)`
              : 'Whole clip shown'}
          </span>
          <span>{formatTime(duration)}</span>
        </p>
      </div>

      <div className="grid gap-3 border-t border-rule pt-3 md:grid-cols-[minmax(0,1fr)_auto]">
        <form
          className="flex flex-wrap items-end gap-2"
          onSubmit={(event) => {
            event.preventDefault();
            mark();
          }}
        >
          <label className="flex min-w-48 flex-1 flex-col gap-1 text-sm font-medium">
            <span>
              Label for the moment <span className="font-normal text-ink-muted">(optional)</span>
            </span>
            <Input
              value={label}
              maxLength={160}
              placeholder="e.g. crank end float, dial at zero"
              onChange={(event) => setLabel(event.target.value)}
              className="h-9 text-sm"
            />
          </label>
          <Button type="submit" variant="primary" loading={createMoment.isPending} loadingText="Marking…" className="h-9" aria-keyshortcuts="m">
            Mark this moment
            <kbd aria-hidden="true" className="figures rounded-sm border border-paper/40 px-1 text-2xs">
              M
            </kbd>
          </Button>
          {onLogReading && (
            <Button className="h-9" onClick={logReading} aria-keyshortcuts="r">
              Log a reading
              <kbd aria-hidden="true" className="figures rounded-sm border border-line px-1 text-2xs">
                R
              </kbd>
            </Button>
          )}
          <p id={shortcutId} className="w-full text-xs text-ink-muted" aria-live="off">
            {hasFocus
              ? `Press M to mark the moment at the current time${onLogReading ? ', R to log a reading there' : ''} (not while typing in a box).`
              : `Shortcut: click the player or tab into it, then press M to mark the current time${onLogReading ? ' or R to log a reading at it' : ''}.`}
          </p>
        </form>
        <TrimEditor key={`${clip.trimInS}-${clip.trimOutS}`} buildId={buildId} clip={clip} duration={duration} currentTime={time} />
      </div>

      <MomentsList
        clip={clip}
        query={moments}
        fps={fps}
        onSeek={(seconds) => {
          videoRef.current?.pause();
          seek(seconds, true);
        }}
        onPlayFrom={(seconds) => playFrom(seconds - LEAD_IN_S)}
        leadInS={LEAD_IN_S}
        onLogReading={
          onLogReading &&
          ((moment) => {
            videoRef.current?.pause();
            seek(moment.atMs / 1000, true);
            onLogReading({ atMs: moment.atMs, momentId: moment.id });
          })
        }
      />
    </section>
  );
}
