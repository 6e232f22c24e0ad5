import { DetailedError, Upload, defaultOptions, type HttpResponse, type PreviousUpload } from 'tus-js-client';
import { resumableUploadsPath, uploadClipIdHeader } from '@shared/clips/clip.schema';
import { csrfHeaderName } from '@shared/http/csrf';
import { ApiError, CSRF_INVALID, apiErrorFromBody, clearCsrfToken, clientErrorCodes, getCsrfToken, readErrorBody } from '@/lib/api';

/**
 * Waits between attempts after a failed request, ms. tus-js-client starts the count again
 * whenever an attempt moved the upload on, so a connection that keeps dropping for a while still
 * gets the whole series each time; after the last one the upload waits for the browser to say it
 * is back online (see `use-clip-uploads.ts`).
 */
const RETRY_DELAYS = [0, 1000, 3000, 5000, 10_000, 20_000, 30_000, 60_000];

/** What a resumable upload reports while it runs. */
export interface ResumableUploadEvents {
  /** Bytes the server has confirmed (after a cut, the offset it carries on from). */
  onProgress(sent: number, total: number): void;
  /** A request failed and will be tried again after a pause (connection lost, server busy). */
  onRetrying(error: ApiError): void;
  /** The last byte arrived and the file became a clip (its id, when the server named it). */
  onSuccess(clipId: number | null): void;
  /** It stopped for good: refused (the server's words), or the connection stayed away. */
  onError(error: ApiError): void;
}

export interface ResumableUpload {
  /** Starts, or carries on after `pause()` or an error: from the offset the server has. */
  start(): void;
  /** Stops sending; the server keeps what it has until the upload expires. */
  pause(): Promise<void>;
  /** Stops and asks the server to delete what it has. */
  cancel(): Promise<void>;
}

/** The endpoint for a build's uploads, absolute (tus-js-client resolves the upload's URL against it). */
export function uploadsEndpoint(buildId: number): string {
  return new URL(resumableUploadsPath(buildId), window.location.origin).toString();
}

/** The server's answer to a failed tus request as an ApiError in its own words. */
export function apiErrorFrom(error: unknown): ApiError {
  if (error instanceof ApiError) return error;
  const response: HttpResponse | null = error instanceof DetailedError ? error.originalResponse : null;
  const status = response?.getStatus() ?? 0;
  if (!response || status === 0) {
    return new ApiError(0, clientErrorCodes.network, 'Benchproof could not be reached. The upload carries on from where it stopped when the connection returns.');
  }
  const body = readErrorBody(parseJson(response.getBody()));
  if (body) return apiErrorFromBody(status, body);
  if (status === 413) return new ApiError(status, 'too_large', 'The file is larger than the server accepts. Split the recording or lower its bitrate.');
  if (status >= 500) return new ApiError(status, `http_${status}`, 'The server ran into a problem. The upload carries on from where it stopped when you try again.');
  return new ApiError(status, `http_${status}`, `The upload failed (HTTP ${status}).`);
}

function parseJson(text: string | undefined): unknown {
  try {
    return JSON.parse(text || 'null');
  } catch {
    return null;
  }
}

/** Worth asking again: the connection, a busy or restarting server, an offset that moved, a stale token. */
function worthRetrying(error: ApiError): boolean {
  if (error.status === 0) return true;
  if (error.status === 403) return error.code === CSRF_INVALID;
  if (error.status === 409) return error.code === 'upload_offset_mismatch';
  if (error.status === 423 || error.status === 429) return true;
  // A full or unwritable store will not get better by itself within the retry delays.
  if (error.code === 'storage_full' || error.code === 'storage_unwritable') return false;
  return error.status >= 500;
}

/**
 * A tus 1.0.0 upload of one file into a build, resuming where an earlier one (this page or one
 * before a reload, found by the file's name, type, size and date) stopped. Sends the session's
 * CSRF token on every request, refreshed once if the server says it is stale.
 */
export async function resumableUpload(buildId: number, file: File, events: ResumableUploadEvents): Promise<ResumableUpload> {
  const upload: Upload = new Upload(file, {
    endpoint: uploadsEndpoint(buildId),
    metadata: { filename: file.name },
    retryDelays: RETRY_DELAYS,
    storeFingerprintForResuming: true,
    removeFingerprintOnSuccess: true,
    async onBeforeRequest(req) {
      req.setHeader(csrfHeaderName, await getCsrfToken());
    },
    onShouldRetry(err) {
      const error = apiErrorFrom(err);
      if (error.status === 403 && error.code === CSRF_INVALID) clearCsrfToken();
      const again = worthRetrying(error);
      if (again) events.onRetrying(error);
      return again;
    },
    onProgress: (sent, total) => events.onProgress(sent, total),
    onSuccess({ lastResponse }) {
      const id = Number(lastResponse.getHeader(uploadClipIdHeader));
      events.onSuccess(Number.isInteger(id) && id > 0 ? id : null);
    },
    onError(err) {
      const error = apiErrorFrom(err);
      // Refused for good: forget the stored address, so choosing the file again starts anew.
      if (error.status >= 400 && error.status < 500 && !worthRetrying(error)) void forget(upload);
      events.onError(error);
    },
  });
  const previous = await upload.findPreviousUploads().catch(() => [] as PreviousUpload[]);
  const latest = previous.sort((a, b) => Date.parse(b.creationTime) - Date.parse(a.creationTime))[0];
  if (latest) upload.resumeFromPreviousUpload(latest);
  return {
    start: () => upload.start(),
    pause: () => upload.abort(false),
    async cancel() {
      await upload.abort(true).catch(() => undefined);
      await forget(upload);
    },
  };
}

/** Removes the stored addresses of this file's uploads to this endpoint. */
async function forget(upload: Upload) {
  const stored = await upload.findPreviousUploads().catch(() => [] as PreviousUpload[]);
  await Promise.all(stored.map((p) => defaultOptions.urlStorage.removeUpload(p.urlStorageKey).catch(() => undefined)));
}

/** An upload this browser started for the build and did not finish (found after a reload). */
export interface UnfinishedUpload {
  urlStorageKey: string;
  uploadUrl: string;
  fileName: string;
  size: number;
  /** Bytes the server has; null when it could not be asked. */
  offset: number | null;
}

/**
 * The uploads of this build that this browser left unfinished (the page was closed or reloaded),
 * with how far each got. Ones the server no longer has (finished, cancelled, expired) are forgotten.
 */
export async function unfinishedUploads(buildId: number): Promise<UnfinishedUpload[]> {
  const prefix = `${uploadsEndpoint(buildId)}/`;
  const all = await defaultOptions.urlStorage.findAllUploads().catch(() => [] as PreviousUpload[]);
  const mine = all.filter((p) => p.uploadUrl?.startsWith(prefix));
  const found = await Promise.all(
    mine.map(async (p): Promise<UnfinishedUpload | null> => {
      let offset: number | null = null;
      try {
        const res = await fetch(p.uploadUrl!, { method: 'HEAD', headers: { 'Tus-Resumable': '1.0.0' }, credentials: 'same-origin' });
        if (res.status === 404 || res.status === 410) {
          await defaultOptions.urlStorage.removeUpload(p.urlStorageKey).catch(() => undefined);
          return null;
        }
        if (res.ok) {
          offset = Number(res.headers.get('Upload-Offset'));
          // Every byte is there: it finished after all (the page went away before the answer).
          if (res.headers.get(uploadClipIdHeader)) {
            await defaultOptions.urlStorage.removeUpload(p.urlStorageKey).catch(() => undefined);
            return null;
          }
        }
      } catch {
        offset = null;
      }
      return { urlStorageKey: p.urlStorageKey, uploadUrl: p.uploadUrl!, fileName: p.metadata.filename ?? 'a file', size: p.size ?? 0, offset };
    }),
  );
  return found.filter((u): u is UnfinishedUpload => u !== null);
}

/** Cancels an unfinished upload from an earlier page: the server deletes its bytes, the browser forgets it. */
export async function discardUnfinished(upload: UnfinishedUpload): Promise<void> {
  await fetch(upload.uploadUrl, {
    method: 'DELETE',
    headers: { 'Tus-Resumable': '1.0.0', [csrfHeaderName]: await getCsrfToken() },
    credentials: 'same-origin',
  }).catch(() => undefined);
  await defaultOptions.urlStorage.removeUpload(upload.urlStorageKey).catch(() => undefined);
}
