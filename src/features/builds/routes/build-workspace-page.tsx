import { useCallback, useEffect, useRef, useState } from 'react';
import { useQuery, useSuspenseQuery, type UseQueryResult } from '@tanstack/react-query';
import { data, useBlocker, useParams, useSearchParams, type LoaderFunctionArgs } from 'react-router-dom';
import { buildIdParamsSchema } from '@shared/builds/build.schema';
import type { Clip } from '@shared/clips/clip.schema';
import type { Reading } from '@shared/readings/reading.schema';
import { requireArea } from '@/features/auth/lib/require-role';
import { clipQueries } from '@/features/clips/api/clip-queries';
import { useClipUploads } from '@/features/clips/api/use-clip-uploads';
import { ClipPlayer, type LogReadingAt } from '@/features/clips/components/clip-player';
import { clipStatusWords } from '@/features/clips/components/clip-status';
import { ClipTimeline } from '@/features/clips/components/clip-timeline';
import { UploadPanel } from '@/features/clips/components/upload-panel';
import { readyUploadedClips } from '@/features/clips/lib/ready-uploads';
import { ClearancesPanel } from '@/features/clearances/components/clearances-panel';
import { ReadingForm } from '@/features/readings/components/reading-form';
import { ReadingsPanel } from '@/features/readings/components/readings-panel';
import { ButtonLink } from '@/components/ui/button';
import { ConfirmDialog } from '@/components/ui/dialog';
import { EmptyState, ErrorState, LoadingState } from '@/components/ui/data-states';
import { Panel } from '@/components/ui/panel';
import { useToast } from '@/components/ui/toast';
import { ApiError, errorMessage } from '@/lib/api';
import { queryClient } from '@/lib/query-client';
import { clearanceQueries } from '@/features/clearances/api/clearance-queries';
import { readingQueries } from '@/features/readings/api/reading-queries';
import { useInvalidateBuilds } from '../api/build-mutations';
import { buildQueries } from '../api/build-queries';
import { BuildHeader } from '../components/build-header';

function buildIdFrom(params: unknown): number {
  const parsed = buildIdParamsSchema.safeParse(params);
  if (!parsed.success) throw data(null, { status: 404 });
  return parsed.data.buildId;
}

export async function loader({ request, params }: LoaderFunctionArgs) {
  await requireArea('builds', request);
  const buildId = buildIdFrom(params);
  // The clips may load on their own (their panel has its own states); the build must exist.
  void queryClient.prefetchQuery(clipQueries.list(buildId));
  void queryClient.prefetchInfiniteQuery(readingQueries.list(buildId));
  void queryClient.prefetchInfiniteQuery(clearanceQueries.list(buildId));
  try {
    await queryClient.ensureQueryData(buildQueries.detail(buildId));
  } catch (error) {
    if (error instanceof ApiError && error.status === 404) throw data(null, { status: 404 });
    throw error;
  }
  return null;
}

/** The reading form's place: which clip, where in it, and a number that starts a fresh form. */
interface LoggingAt {
  clipId: number;
  at: LogReadingAt;
  seq: number;
}

/**
 * The build at the bench: its parts; the player with moment marking on the left and, beside it,
 * the clips in order with the uploads, or the reading form while a reading is logged; under them
 * the readings table and the clearances. One column on a phone, the player first.
 */
export function Component() {
  const buildId = buildIdFrom(useParams());
  const { data: build } = useSuspenseQuery(buildQueries.detail(buildId));
  const clips = useQuery(clipQueries.list(buildId));
  const invalidateBuilds = useInvalidateBuilds();
  const uploads = useClipUploads(buildId, { onSent: invalidateBuilds });
  const [params, setParams] = useSearchParams();
  const [focusRequest, setFocusRequest] = useState(0);
  const [logging, setLogging] = useState<LoggingAt | null>(null);
  const [seekRequest, setSeekRequest] = useState<{ clipId: number; atMs: number; seq: number } | null>(null);
  const { toast } = useToast();

  const clipList = clips.data;
  const requestedId = Number(params.get('clip')) || null;
  const requested = clipList?.find((clip) => clip.id === requestedId) ?? null;
  const firstReady = clipList?.find(isPlayable) ?? null;
  const selected = requested ?? (requestedId === null ? firstReady : null);

  // Pin the first ready clip once shown, so reordering or new uploads never swap the clip under the builder's hands.
  useEffect(() => {
    if (requestedId !== null || !firstReady) return;
    setParams(
      (current) => {
        const next = new URLSearchParams(current);
        next.set('clip', String(firstReady.id));
        return next;
      },
      { replace: true },
    );
  }, [requestedId, firstReady, setParams]);

  const show = useCallback(
    (clipId: number) => {
      setSeekRequest(null);
      setParams(
        (current) => {
          const next = new URLSearchParams(current);
          next.set('clip', String(clipId));
          return next;
        },
        { replace: true },
      );
    },
    [setParams],
  );

  const select = useCallback(
    (clipId: number) => {
      show(clipId);
      // Into the player, so the shortcuts work at once and small screens scroll to it.
      setFocusRequest((n) => n + 1);
    },
    [show],
  );

  const seekTo = useCallback((clipId: number, atMs: number) => {
    setSeekRequest((current) => ({ clipId, atMs, seq: (current?.seq ?? 0) + 1 }));
  }, []);

  const openReading = useCallback(
    (reading: Reading) => {
      setParams(
        (current) => {
          const next = new URLSearchParams(current);
          next.set('clip', String(reading.clipId));
          return next;
        },
        { replace: true },
      );
      seekTo(reading.clipId, reading.atMs);
      setFocusRequest((n) => n + 1);
    },
    [setParams, seekTo],
  );

  const closeForm = useCallback(() => {
    setLogging(null);
    // Back into the player, so R and M work again at once.
    setFocusRequest((n) => n + 1);
  }, []);

  const formOpen = logging !== null && selected !== null && logging.clipId === selected.id;

  // A file uploaded here opens in the player once the server has made it ready (the latest one,
  // when several finish together). Never under an open reading form: it waits until that closes.
  // Focus stays where it is; the toast says what changed.
  const opened = useRef(new Set<number>());
  useEffect(() => {
    if (formOpen) return;
    const ready = readyUploadedClips(uploads.items, clipList, opened.current);
    const latest = ready.at(-1);
    if (!latest) return;
    for (const clip of ready) opened.current.add(clip.id);
    if (latest.id !== selected?.id) show(latest.id);
    toast({ tone: 'info', title: 'Clip ready', description: `“${latest.title}” is open in the player.` });
  }, [formOpen, uploads.items, clipList, selected?.id, show, toast]);

  const onDeleted = useCallback(
    (clipId: number) => {
      void invalidateBuilds();
      if (clipId === selected?.id) setParams({}, { replace: true });
    },
    [invalidateBuilds, selected?.id, setParams],
  );

  const blocker = useBlocker(
    ({ currentLocation, nextLocation }) => uploads.activeCount > 0 && currentLocation.pathname !== nextLocation.pathname,
  );
  useEffect(() => {
    if (uploads.activeCount === 0) return;
    const warn = (event: BeforeUnloadEvent) => event.preventDefault();
    window.addEventListener('beforeunload', warn);
    return () => window.removeEventListener('beforeunload', warn);
  }, [uploads.activeCount]);

  return (
    <>
      <p className="mb-2 text-sm" data-print="hide">
        <ButtonLink to="/builds" variant="quiet" size="sm" className="-ml-2.5">
          ← My builds
        </ButtonLink>
      </p>
      <BuildHeader build={build} />
      <nav aria-label="Sections of this build" className="-mt-2 mb-4 flex flex-wrap gap-x-4 gap-y-1 text-sm" data-print="hide">
        <a href="#workbench">Player</a>
        {!formOpen && <a href="#clips">Clips</a>}
        <a href="#readings">Readings</a>
        <a href="#clearances">Results</a>
      </nav>

      <div id="workbench" className="grid scroll-mt-4 items-start gap-5 lg:grid-cols-[minmax(0,1fr)_minmax(0,23rem)]">
        <div className="min-w-0">
          <PlayerArea
            buildId={buildId}
            clips={clipList}
            selected={selected}
            requestedId={requestedId}
            loading={clips.isPending}
            focusRequest={focusRequest}
            onLogReading={(at) => selected && setLogging((current) => ({ clipId: selected.id, at, seq: (current?.seq ?? 0) + 1 }))}
            seekRequest={seekRequest && seekRequest.clipId === selected?.id ? seekRequest : null}
          />
        </div>

        <div id={formOpen ? undefined : 'clips'} className="min-w-0 scroll-mt-4">
          {formOpen ? (
            // While a reading is logged the form takes the clips' place, beside the player.
            <ReadingForm
              key={logging.seq}
              build={build}
              clip={selected}
              at={logging.at}
              onSeek={(atMs) => seekTo(selected.id, atMs)}
              onClose={closeForm}
              onSaved={(reading) => {
                toast({ tone: 'success', title: 'Reading saved', description: `${reading.name}: ${reading.result.display}. It is in the readings table below.` });
                closeForm();
              }}
            />
          ) : (
            <Panel title="Clips" description="In the order a reader will see them. Drag a card, or use Up and Down.">
              <div className="flex flex-col gap-4">
                <UploadPanel
                  items={uploads.items}
                  clips={clipList}
                  onAdd={uploads.add}
                  onPause={uploads.pause}
                  onResume={uploads.resume}
                  onCancel={uploads.cancel}
                  onRetry={uploads.retry}
                  onDismiss={uploads.dismiss}
                  onOpen={select}
                  unfinished={uploads.unfinished}
                  onDiscardUnfinished={uploads.discard}
                />
                <ClipsBody
                  buildId={buildId}
                  query={clips}
                  selectedId={selected?.id ?? null}
                  onSelect={select}
                  onDeleted={onDeleted}
                />
              </div>
            </Panel>
          )}
        </div>
      </div>

      <div className="mt-6 flex flex-col gap-6">
        {/* The whole width: the table scrolls sideways inside its own box, its first columns always in view. */}
        <div id="readings" className="min-w-0 scroll-mt-4">
          <ReadingsPanel build={build} onOpen={openReading} />
        </div>
        <div id="clearances" className="min-w-0 scroll-mt-4">
          <ClearancesPanel build={build} />
        </div>
      </div>

      <ConfirmDialog
        open={blocker.state === 'blocked'}
        onOpenChange={(open) => !open && blocker.reset?.()}
        title="Leave while files are uploading?"
        description={`${uploads.activeCount} ${uploads.activeCount === 1 ? 'file is' : 'files are'} still uploading or waiting. Leaving this build stops them; choose the same files here again later to carry on from where they stopped. Clips already uploaded are kept and keep processing.`}
        confirmLabel="Leave and stop uploads"
        cancelLabel="Stay here"
        confirmVariant="danger"
        onConfirm={() => blocker.proceed?.()}
      />
    </>
  );
}

function isPlayable(clip: Clip): boolean {
  return clip.status === 'ready' && clip.videoUrl !== null;
}

function ClipsBody({
  buildId,
  query,
  selectedId,
  onSelect,
  onDeleted,
}: {
  buildId: number;
  query: UseQueryResult<Clip[]>;
  selectedId: number | null;
  onSelect: (clipId: number) => void;
  onDeleted: (clipId: number) => void;
}) {
  if (query.isPending) return <LoadingState label="Loading the clips…" className="py-4" />;
  if (!query.data) {
    return (
      <ErrorState
        title="The clips could not be loaded"
        error={query.error}
        onRetry={() => void query.refetch()}
        retrying={query.isRefetching}
      />
    );
  }
  if (query.data.length === 0) {
    return (
      <EmptyState title="No clips yet">
        Film the work at the bench, then add the files above. Each clip is made ready for the web on the server (seconds
        to a few minutes); then open it to mark the moments you took readings at.
      </EmptyState>
    );
  }
  return (
    <>
      <ClipTimeline buildId={buildId} clips={query.data} selectedId={selectedId} onSelect={onSelect} onDeleted={onDeleted} />
      {query.isRefetchError && (
        <p role="alert" className="text-xs text-danger">
          The clips could not be refreshed and may be out of date: {errorMessage(query.error)}
        </p>
      )}
    </>
  );
}

function PlayerArea({
  buildId,
  clips,
  selected,
  requestedId,
  loading,
  focusRequest,
  onLogReading,
  seekRequest,
}: {
  buildId: number;
  clips: Clip[] | undefined;
  selected: Clip | null;
  requestedId: number | null;
  loading: boolean;
  focusRequest: number;
  onLogReading: (at: LogReadingAt) => void;
  seekRequest: { atMs: number; seq: number } | null;
}) {
  if (loading) return <LoadingState label="Loading the player…" />;
  if (!clips) return null;
  if (requestedId !== null && !selected) {
    return (
      <EmptyState title="That clip is not in this build">
        It may have been deleted. Choose a ready clip from the list to play it.
      </EmptyState>
    );
  }
  if (selected && !isPlayable(selected)) {
    return (
      <EmptyState title={`“${selected.title}” cannot be played yet`}>
        {selected.status === 'failed'
          ? `Processing failed: ${selected.failureReason ?? 'no reason given'}. Delete it and upload the file again, or another copy of it.`
          : `It is ${clipStatusWords(selected).toLowerCase()} on the server and opens here as soon as it is ready.`}
      </EmptyState>
    );
  }
  if (!selected) {
    const inProgress = clips.filter((clip) => clip.status === 'uploaded' || clip.status === 'processing').length;
    return (
      <EmptyState title="Nothing to play yet">
        {clips.length === 0
          ? 'Add a clip under “Clips”. When it is ready it opens here, with frame steps and a button to mark the moment of each reading.'
          : inProgress > 0
            ? `${inProgress} ${inProgress === 1 ? 'clip is' : 'clips are'} still being processed. The first one ready opens here.`
            : 'None of the clips could be processed. Upload the files again, or another copy of them.'}
      </EmptyState>
    );
  }
  return (
    <ClipPlayer
      key={selected.id}
      clip={selected}
      buildId={buildId}
      focusRequest={focusRequest}
      onLogReading={onLogReading}
      seekRequest={seekRequest}
    />
  );
}
