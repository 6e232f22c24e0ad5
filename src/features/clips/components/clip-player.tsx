import { useCallback, useEffect, useId, useRef, useState, type KeyboardEvent } from 'react';
import { useQuery } from '@tanstack/react-query';
import type { Clip } from '@shared/clips/clip.schema';
import type { Suggestion } from '@shared/speech/speech.schema';
import { Button } from '@/components/ui/button';
import { Input } from '@/components/ui/field';
import { useToast } from '@/components/ui/toast';
import { errorMessage } from '@/lib/api';
import { cn } from '@/lib/cn';
import { useCreateMoment } from '../api/clip-mutations';
import { clipQueries } from '../api/clip-queries';
import { formatFrameRate, formatResolution, formatTime, frameDuration, frameIndexAt, spokenTime } from '../lib/clip-format';
import { heardFiguresOf, type HeardFigures } from '../lib/heard';
import { isShortcut, keyLabel, useHeardShortcuts, usePlayerShortcuts } from '../lib/player-shortcuts';
import { DisplayRegionControls, DisplayRegionOverlay, useDisplayMarking } from './display-region';
import { CaptionEditor, CaptionsTrack } from './caption-editor';
import { HeardList } from './heard-list';
import { MomentsList } from './moments-list';
import { ScrubStrip } from './scrub-strip';
import { ShortcutSettings } from './shortcut-settings';
import { TrimEditor } from './trim-editor';

/** Seconds "play from before" starts ahead of a moment. */
const LEAD_IN_S = 3;

/** Where the reading form should open: a time, and the moment already marked there if any. */
export interface LogReadingAt {
  atMs: number;
  momentId: number | null;
  /**
   * A proposal heard in the clip's sound, accepted: the form opens filled in with its figures,
   * and (with no moment there yet) marks the moment at `atMs` only when the reading is saved.
   */
  heard?: HeardFigures;
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
 * A ready clip at the bench: the picture with one set of controls, ours, for exact work (play,
 * frame steps, jumps, a thumbnail scrub strip, sound), the trimmed range, marking moments
 * (button, or a single key while the player has focus) and logging a reading at the current
 * time (button or its key). The keys can be turned off or changed (`ShortcutSettings`).
 * Nothing here starts playback except Play, Space on the picture and "Play from": clicking the
 * picture only gives it focus, and marking pauses.
 */
export function ClipPlayer({ clip, buildId, focusRequest = 0, onLogReading, seekRequest = null }: ClipPlayerProps) {
  const videoRef = useRef<HTMLVideoElement>(null);
  const frameRef = useRef<HTMLDivElement>(null);
  const [time, setTime] = useState(clip.trimInS ?? 0);
  const [playing, setPlaying] = useState(false);
  const [muted, setMuted] = useState(false);
  const [mediaDuration, setMediaDuration] = useState<number | null>(null);
  const displayMarking = useDisplayMarking(clip);
  const [announcement, setAnnouncement] = useState('');
  const [hasFocus, setHasFocus] = useState(false);
  const [label, setLabel] = useState('');
  const guardOut = useRef(false);
  const titleId = useId();
  const shortcutId = useId();
  const { toast } = useToast();
  const createMoment = useCreateMoment(clip.id);
  const moments = useQuery(clipQueries.moments(clip.id));
  const [shortcuts, setShortcuts] = usePlayerShortcuts();
  const [heardKeys, setHeardKeys] = useHeardShortcuts();
  const markKey = keyLabel(shortcuts.mark);
  const readingKey = keyLabel(shortcuts.reading);

  const fps = clip.probe?.frameRate ?? 1 / frameDuration(clip);
  const frame = frameDuration(clip);
  const duration = clip.probe?.durationS ?? mediaDuration ?? 0;
  const from = clip.trimInS ?? 0;
  const to = clip.trimOutS ?? duration;

  // Onto the picture: the shortcuts, Space and the arrows all work from there at once.
  useEffect(() => {
    if (focusRequest > 0) frameRef.current?.focus({ preventScroll: false });
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

  /** Accepting a proposal heard at its start: the player goes there and the form opens filled in (a moment on that frame is reused). */
  function acceptHeard(proposal: Suggestion) {
    if (!onLogReading) return;
    videoRef.current?.pause();
    seek(proposal.atMs / 1000, true);
    const frameIndex = frameIndexAt(proposal.atMs / 1000, fps);
    const existing = moments.data?.find((m) => frameIndexAt(m.atMs / 1000, fps) === frameIndex) ?? null;
    onLogReading({ atMs: existing?.atMs ?? proposal.atMs, momentId: existing?.id ?? null, heard: heardFiguresOf(proposal) });
  }

  function onRegionKeyDown(event: KeyboardEvent<HTMLElement>) {
    if (!shortcuts.enabled) return;
    const isMark = isShortcut(event, shortcuts.mark);
    const isReading = !!onLogReading && isShortcut(event, shortcuts.reading);
    if (!isMark && !isReading) return;
    const target = event.target as HTMLElement;
    // Keys from dialogs opened here (portals, outside this element) and from boxes being typed in are theirs.
    if (!event.currentTarget.contains(target)) return;
    if (target.closest('input, textarea, select, [contenteditable="true"]')) return;
    event.preventDefault();
    if (isMark) mark();
    else logReading();
  }

  /** Keys on the picture itself: Space plays or pauses, the arrows step a frame. */
  function onFrameKeyDown(event: KeyboardEvent<HTMLDivElement>) {
    if (event.ctrlKey || event.metaKey || event.altKey || event.target !== event.currentTarget) return;
    if (event.key === ' ') togglePlay();
    else if (event.key === 'ArrowLeft') stepFrames(-1);
    else if (event.key === 'ArrowRight') stepFrames(1);
    else return;
    event.preventDefault();
  }

  function toggleSound() {
    const video = videoRef.current;
    if (!video) return;
    video.muted = !video.muted;
    setMuted(video.muted);
  }

  const keysHint = !shortcuts.enabled
    ? 'Single-key shortcuts are off: use the buttons. Turn them on under “Keyboard shortcuts”.'
    : hasFocus
      ? `Press ${markKey} to mark the moment at the current time${onLogReading ? `, ${readingKey} to log a reading there` : ''} (not while typing in a box). Marking pauses; it never starts playback.`
      : `Shortcut: click the picture or tab into the player, then press ${markKey} to mark the current time${onLogReading ? ` or ${readingKey} to log a reading at it` : ''}. Clicking the picture does not play it.`;

  return (
    <section
      aria-labelledby={titleId}
      aria-describedby={shortcutId}
      onKeyDown={onRegionKeyDown}
      onFocus={() => setHasFocus(true)}
      onBlur={(event) => {
        if (!event.currentTarget.contains(event.relatedTarget as Node | null)) setHasFocus(false);
      }}
      className={cn('flex flex-col gap-3 rounded-lg border bg-paper p-3', hasFocus ? 'border-ink' : 'border-rule')}
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

      {/* The picture takes focus when clicked (so the shortcuts work at once) and never plays on a click. */}
      <div
        ref={frameRef}
        role="group"
        tabIndex={0}
        aria-label={`Picture of ${clip.title}: Space plays or pauses, the left and right arrows step one frame`}
        aria-describedby={shortcutId}
        onKeyDown={onFrameKeyDown}
        data-player-frame=""
        className="relative rounded-sm focus:outline-2 focus:outline-offset-2 focus:outline-accent"
      >
        <video
          ref={videoRef}
          key={clip.id}
          playsInline
          preload="metadata"
          poster={clip.posterUrl ?? undefined}
          className="block aspect-video max-h-[60vh] w-full rounded-sm bg-ink"
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
          onVolumeChange={(event) => setMuted(event.currentTarget.muted)}
        >
          {clip.videoUrl && <source src={clip.videoUrl} />}
          <track kind="chapters" src={clip.chaptersUrl} label="Chapters" default />
          <CaptionsTrack clipId={clip.id} />
          Your browser cannot play this video. <a href={clip.videoUrl ?? '#'}>Download it</a> instead.
        </video>
        <DisplayRegionOverlay marking={displayMarking} clip={clip} />
      </div>

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
        <Button size="sm" variant="quiet" onClick={toggleSound} aria-pressed={muted} className="ml-auto aria-pressed:border-ink aria-pressed:bg-paper-3">
          Mute
        </Button>
        {/* Read out only after explicit steps and marks, never while playing. */}
        <span className="sr-only" aria-live="polite">
          {announcement}
        </span>
      </div>

      <div className="flex flex-col gap-1">
        <div className="flex flex-wrap items-baseline justify-between gap-x-3">
          <p className="flex items-baseline gap-2">
            <span className="sr-only">Current time</span>
            <span className="figures text-lg text-ink">{formatTime(time)}</span>
            <span className="figures text-xs text-ink-muted">
              / {formatTime(duration)} · frame {frameIndexAt(time, fps) + 1}
            </span>
          </p>
          <p className="figures text-2xs text-ink-muted">
            {clip.trimInS != null || clip.trimOutS != null
              ? `Shown ${formatTime(from)}–${formatTime(to)} (greyed outside)`
              : 'Whole clip shown'}
          </p>
        </div>
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
        <p className="figures flex justify-between text-2xs text-ink-muted" aria-hidden="true">
          <span>{formatTime(0)}</span>
          <span>{formatTime(duration)}</span>
        </p>
      </div>

      <div className="flex flex-col gap-2 border-t border-rule pt-3">
        <form
          className="flex flex-wrap items-end gap-2"
          onSubmit={(event) => {
            event.preventDefault();
            mark();
          }}
        >
          <label className="flex min-w-[min(100%,16rem)] flex-1 flex-col gap-1 text-sm font-medium">
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
          <span className="flex flex-wrap gap-2">
            <Button
              type="submit"
              variant="primary"
              loading={createMoment.isPending}
              loadingText="Marking…"
              className="h-9"
              aria-keyshortcuts={shortcuts.enabled ? shortcuts.mark : undefined}
            >
              Mark this moment
              {shortcuts.enabled && (
                <kbd aria-hidden="true" className="figures rounded-sm border border-paper/40 px-1 text-2xs">
                  {markKey}
                </kbd>
              )}
            </Button>
            {onLogReading && (
              <Button className="h-9" onClick={logReading} aria-keyshortcuts={shortcuts.enabled ? shortcuts.reading : undefined}>
                Log a reading
                {shortcuts.enabled && (
                  <kbd aria-hidden="true" className="figures rounded-sm border border-line px-1 text-2xs">
                    {readingKey}
                  </kbd>
                )}
              </Button>
            )}
          </span>
        </form>
        <div className="flex flex-wrap items-start justify-between gap-x-3 gap-y-1">
          <p id={shortcutId} className="min-w-0 flex-1 basis-64 text-xs text-ink-muted" aria-live="off">
            {keysHint}
          </p>
          <ShortcutSettings
            settings={shortcuts}
            onSave={setShortcuts}
            withReading={!!onLogReading}
            heard={onLogReading ? { settings: heardKeys, onSave: setHeardKeys } : undefined}
            className="-my-1 h-7 px-2 text-xs"
          />
        </div>
      </div>

      <HeardList
        clip={clip}
        shortcuts={shortcuts}
        keys={heardKeys}
        onSeek={(seconds) => {
          videoRef.current?.pause();
          seek(seconds, true);
        }}
        onAccept={onLogReading && acceptHeard}
      />
      {onLogReading && <DisplayRegionControls marking={displayMarking} />}

      <CaptionEditor
        clip={clip}
        canCorrect={onLogReading !== undefined}
        onSeek={(seconds) => {
          videoRef.current?.pause();
          seek(seconds, true);
        }}
      />

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

      <TrimEditor key={`${clip.trimInS}-${clip.trimOutS}`} buildId={buildId} clip={clip} duration={duration} currentTime={time} />
    </section>
  );
}
