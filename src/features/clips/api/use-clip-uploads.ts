import { useCallback, useEffect, useRef, useState } from 'react';
import { useQueryClient } from '@tanstack/react-query';
import { clientErrorCodes, type ApiError } from '@/lib/api';
import { addSample, uploadRate, type RateSample, type UploadRate } from '../lib/upload-rate';
import { clipQueries } from './clip-queries';
import { discardUnfinished, resumableUpload, unfinishedUploads, type ResumableUpload, type UnfinishedUpload } from './resumable-upload';

/**
 * queued: waiting its turn · uploading · retrying: a request failed and is tried again ·
 * offline: the connection stayed away; it carries on when the browser is back online ·
 * paused: by the builder · sent: it became a clip · failed: refused · cancelled.
 */
export type UploadState = 'queued' | 'uploading' | 'retrying' | 'offline' | 'paused' | 'sent' | 'failed' | 'cancelled';

/** One chosen file on its way to the server. After `sent`, follow the clip's own status by `clipId`. */
export interface UploadItem {
  key: string;
  file: File;
  state: UploadState;
  /** Bytes the server has confirmed. */
  loaded: number;
  total: number | null;
  /** Pace over the last seconds and the time left at it (while uploading). */
  rate: UploadRate;
  clipId: number | null;
  /** Why it stopped or waits, in words for the builder (retrying, offline, failed). */
  error: string | null;
}

/** Files sent at once; the rest wait their turn so each gets the bench's whole connection. */
const CONCURRENT_UPLOADS = 1;
const noRate: UploadRate = { bytesPerSecond: null, secondsLeft: null };

let nextKey = 0;

/** "The upload stopped at 40 %; it will resume when the connection returns." */
export function stoppedAt(loaded: number, total: number | null): string {
  const percent = total ? Math.floor((loaded / total) * 100) : 0;
  return `The upload stopped at ${percent} %; it will resume when the connection returns.`;
}

/**
 * The upload queue of one build, over resumable (tus) uploads: add files, watch each one's
 * progress, pace and time left, pause and resume, cancel, retry, dismiss. A dropped connection
 * costs only the bytes in flight: the upload carries on from the server's offset when the
 * connection returns, and after a reload when the same file is chosen again. A finished file's
 * clip appears in the build's clip list at once.
 */
export function useClipUploads(buildId: number, { onSent }: { onSent?: (clipId: number | null) => void } = {}) {
  const queryClient = useQueryClient();
  const [items, setItems] = useState<UploadItem[]>([]);
  const [unfinished, setUnfinished] = useState<UnfinishedUpload[]>([]);
  const handles = useRef(new Map<string, ResumableUpload>());
  const samples = useRef(new Map<string, RateSample[]>());
  const started = useRef(new Set<string>());
  const itemsRef = useRef(items);
  const onSentRef = useRef(onSent);
  useEffect(() => {
    onSentRef.current = onSent;
    itemsRef.current = items;
  }, [onSent, items]);

  const patch = useCallback((key: string, change: Partial<UploadItem>) => {
    setItems((current) => current.map((item) => (item.key === key ? { ...item, ...change } : item)));
  }, []);

  // Uploads this browser left unfinished for this build (a reload, a closed tab).
  useEffect(() => {
    let live = true;
    unfinishedUploads(buildId).then(
      (found) => live && setUnfinished(found),
      () => undefined,
    );
    return () => {
      live = false;
    };
  }, [buildId]);

  const start = useCallback(
    (item: UploadItem) => {
      started.current.add(item.key);
      samples.current.delete(item.key);
      patch(item.key, { state: 'uploading', total: item.file.size, error: null, rate: noRate });
      const current = () => itemsRef.current.find((i) => i.key === item.key);
      void resumableUpload(buildId, item.file, {
        onProgress(sent, total) {
          const recent = addSample(samples.current.get(item.key) ?? [], { atMs: performance.now(), bytes: sent });
          samples.current.set(item.key, recent);
          setItems((list) =>
            list.map((i) =>
              i.key === item.key && (i.state === 'uploading' || i.state === 'retrying')
                ? { ...i, state: 'uploading', loaded: sent, total, error: null, rate: uploadRate(recent, total) }
                : i,
            ),
          );
        },
        onRetrying(error: ApiError) {
          const now = current();
          samples.current.delete(item.key);
          patch(item.key, {
            state: 'retrying',
            rate: noRate,
            error: error.code === clientErrorCodes.network ? stoppedAt(now?.loaded ?? 0, now?.total ?? item.file.size) : `${error.message} Trying again…`,
          });
        },
        onSuccess(clipId) {
          handles.current.delete(item.key);
          patch(item.key, { state: 'sent', clipId, loaded: item.file.size, rate: noRate, error: null });
          void queryClient.invalidateQueries({ queryKey: clipQueries.list(buildId).queryKey });
          onSentRef.current?.(clipId);
        },
        onError(error) {
          const now = current();
          samples.current.delete(item.key);
          if (error.code === clientErrorCodes.network) {
            // Kept in hand: it carries on when the browser is back online (see below).
            patch(item.key, { state: 'offline', rate: noRate, error: stoppedAt(now?.loaded ?? 0, now?.total ?? item.file.size) });
            return;
          }
          handles.current.delete(item.key);
          patch(item.key, { state: 'failed', rate: noRate, error: error.message });
        },
      }).then(
        (handle) => {
          handles.current.set(item.key, handle);
          // Cancelled or paused while the earlier upload was being looked up.
          const now = current()?.state;
          if (now === 'cancelled') void handle.cancel();
          else if (now !== 'paused') handle.start();
        },
        (error: unknown) => patch(item.key, { state: 'failed', error: error instanceof Error ? error.message : 'The upload could not start.' }),
      );
      // Choosing a file that an earlier page left unfinished carries that upload on.
      setUnfinished((list) => list.filter((u) => !(u.fileName === item.file.name && u.size === item.file.size)));
    },
    [buildId, patch, queryClient],
  );

  // Start the next waiting file whenever a slot is free. `started` keeps a
  // re-run of this effect (StrictMode, fast updates) from sending a file twice.
  useEffect(() => {
    const running = items.filter((item) => item.state === 'uploading' || item.state === 'retrying').length;
    const waiting = items.filter((item) => item.state === 'queued' && !started.current.has(item.key));
    for (const item of waiting.slice(0, Math.max(0, CONCURRENT_UPLOADS - running))) start(item);
  }, [items, start]);

  // Back online: uploads that stopped for the connection carry on by themselves.
  useEffect(() => {
    const resumeAll = () => {
      for (const item of itemsRef.current) {
        if (item.state !== 'offline') continue;
        patch(item.key, { state: 'uploading', error: null });
        handles.current.get(item.key)?.start();
      }
    };
    window.addEventListener('online', resumeAll);
    return () => window.removeEventListener('online', resumeAll);
  }, [patch]);

  // Leaving the workspace pauses the uploads still running: the server keeps what it has, and
  // choosing the same file again later carries on from there.
  useEffect(() => {
    const map = handles.current;
    return () => {
      for (const handle of map.values()) void handle.pause();
    };
  }, []);

  const add = useCallback((files: Iterable<File>) => {
    const added: UploadItem[] = Array.from(files, (file) => ({
      key: `upload-${++nextKey}`,
      file,
      state: 'queued',
      loaded: 0,
      total: file.size,
      rate: noRate,
      clipId: null,
      error: null,
    }));
    if (added.length) setItems((current) => [...current, ...added]);
    return added.length;
  }, []);

  const pause = useCallback(
    (key: string) => {
      samples.current.delete(key);
      patch(key, { state: 'paused', rate: noRate, error: null });
      void handles.current.get(key)?.pause();
    },
    [patch],
  );

  const resume = useCallback(
    (key: string) => {
      const handle = handles.current.get(key);
      if (!handle) return;
      patch(key, { state: 'uploading', error: null });
      handle.start();
    },
    [patch],
  );

  const cancel = useCallback(
    (key: string) => {
      const handle = handles.current.get(key);
      handles.current.delete(key);
      patch(key, { state: 'cancelled', rate: noRate, error: null });
      void handle?.cancel();
    },
    [patch],
  );

  const retry = useCallback(
    (key: string) => {
      started.current.delete(key);
      handles.current.delete(key);
      patch(key, { state: 'queued', error: null, rate: noRate });
    },
    [patch],
  );

  const dismiss = useCallback((key: string) => {
    started.current.delete(key);
    setItems((current) => current.filter((item) => item.key !== key));
  }, []);

  const discard = useCallback((upload: UnfinishedUpload) => {
    setUnfinished((list) => list.filter((u) => u.urlStorageKey !== upload.urlStorageKey));
    void discardUnfinished(upload);
  }, []);

  const activeCount = items.filter((item) => ['queued', 'uploading', 'retrying', 'offline'].includes(item.state)).length;

  return { items, unfinished, add, pause, resume, cancel, retry, dismiss, discard, activeCount };
}
