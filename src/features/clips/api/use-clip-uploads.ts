import { useCallback, useEffect, useRef, useState } from 'react';
import { useQueryClient } from '@tanstack/react-query';
import type { Clip } from '@shared/clips/clip.schema';
import { errorMessage } from '@/lib/api';
import { clipQueries } from './clip-queries';
import { isAbortError, uploadClip, type ClipUpload } from './upload-clip';

export type UploadState = 'queued' | 'uploading' | 'sent' | 'failed' | 'cancelled';

/** One chosen file on its way to the server. After `sent`, follow the clip's own status by `clipId`. */
export interface UploadItem {
  key: string;
  file: File;
  state: UploadState;
  loaded: number;
  total: number | null;
  clipId: number | null;
  error: string | null;
}

/** Files sent at once; the rest wait their turn so each gets the bench's whole connection. */
const CONCURRENT_UPLOADS = 1;

let nextKey = 0;

/**
 * The upload queue of one build: add files, watch each file's progress,
 * cancel, retry, dismiss. A sent file's clip is put into the build's clip list
 * at once, so polling picks up its processing.
 */
export function useClipUploads(buildId: number, { onSent }: { onSent?: (clip: Clip) => void } = {}) {
  const queryClient = useQueryClient();
  const [items, setItems] = useState<UploadItem[]>([]);
  const handles = useRef(new Map<string, ClipUpload>());
  const started = useRef(new Set<string>());
  const onSentRef = useRef(onSent);
  useEffect(() => {
    onSentRef.current = onSent;
  }, [onSent]);

  const patch = useCallback((key: string, change: Partial<UploadItem>) => {
    setItems((current) => current.map((item) => (item.key === key ? { ...item, ...change } : item)));
  }, []);

  const start = useCallback(
    (item: UploadItem) => {
      started.current.add(item.key);
      patch(item.key, { state: 'uploading', loaded: 0, total: item.file.size, error: null });
      const upload = uploadClip(buildId, item.file, {
        onProgress: ({ loaded, total }) => patch(item.key, { loaded, total }),
      });
      handles.current.set(item.key, upload);
      upload.done.then(
        (clip) => {
          handles.current.delete(item.key);
          patch(item.key, { state: 'sent', clipId: clip.id, loaded: item.file.size });
          queryClient.setQueryData(clipQueries.list(buildId).queryKey, (clips) =>
            clips && !clips.some((c) => c.id === clip.id) ? [...clips, clip] : clips,
          );
          void queryClient.invalidateQueries({ queryKey: clipQueries.list(buildId).queryKey });
          onSentRef.current?.(clip);
        },
        (error: unknown) => {
          handles.current.delete(item.key);
          if (isAbortError(error)) patch(item.key, { state: 'cancelled' });
          else patch(item.key, { state: 'failed', error: errorMessage(error) });
        },
      );
    },
    [buildId, patch, queryClient],
  );

  // Start the next waiting file whenever a slot is free. `started` keeps a
  // re-run of this effect (StrictMode, fast updates) from sending a file twice.
  useEffect(() => {
    const running = items.filter((item) => item.state === 'uploading').length;
    const waiting = items.filter((item) => item.state === 'queued' && !started.current.has(item.key));
    for (const item of waiting.slice(0, Math.max(0, CONCURRENT_UPLOADS - running))) start(item);
  }, [items, start]);

  // Leaving the workspace ends the uploads still running (the page asks first).
  useEffect(() => {
    const map = handles.current;
    return () => {
      for (const handle of map.values()) handle.abort();
    };
  }, []);

  const add = useCallback((files: Iterable<File>) => {
    const added: UploadItem[] = Array.from(files, (file) => ({
      key: `upload-${++nextKey}`,
      file,
      state: 'queued',
      loaded: 0,
      total: file.size,
      clipId: null,
      error: null,
    }));
    if (added.length) setItems((current) => [...current, ...added]);
    return added.length;
  }, []);

  const cancel = useCallback(
    (key: string) => {
      const handle = handles.current.get(key);
      if (handle) handle.abort();
      else patch(key, { state: 'cancelled' });
    },
    [patch],
  );

  const retry = useCallback(
    (key: string) => {
      started.current.delete(key);
      patch(key, { state: 'queued', loaded: 0, error: null });
    },
    [patch],
  );

  const dismiss = useCallback((key: string) => {
    started.current.delete(key);
    setItems((current) => current.filter((item) => item.key !== key));
  }, []);

  const activeCount = items.filter((item) => item.state === 'queued' || item.state === 'uploading').length;

  return { items, add, cancel, retry, dismiss, activeCount };
}
