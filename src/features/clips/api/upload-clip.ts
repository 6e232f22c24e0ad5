import { clipResponseSchema, clipUploadField, type Clip } from '@shared/clips/clip.schema';
import { csrfHeaderName } from '@shared/http/csrf';
import { ApiError, readErrorBody, CSRF_INVALID, clearCsrfToken, clientErrorCodes, getCsrfToken } from '@/lib/api';

export interface UploadProgress {
  loaded: number;
  /** Null when the browser cannot tell the size of the request. */
  total: number | null;
}

export interface ClipUpload {
  /** Resolves with the new clip (status `uploaded`); rejects with an ApiError, or an AbortError after `abort()`. */
  done: Promise<Clip>;
  abort: () => void;
}

/**
 * POST /api/builds/:buildId/clips as multipart, one file per request.
 * XMLHttpRequest rather than fetch because only XHR reports upload progress.
 * Sends the CSRF header like `apiFetch`, and retries once with a fresh token if it was stale.
 */
export function uploadClip(
  buildId: number,
  file: File,
  { title, onProgress }: { title?: string; onProgress?: (progress: UploadProgress) => void } = {},
): ClipUpload {
  let xhr: XMLHttpRequest | null = null;
  let aborted = false;

  const attempt = async (isRetry: boolean): Promise<Clip> => {
    const token = await getCsrfToken();
    if (aborted) throw abortError();
    try {
      return await send(token);
    } catch (error) {
      if (!isRetry && error instanceof ApiError && error.status === 403 && error.code === CSRF_INVALID) {
        clearCsrfToken();
        return attempt(true);
      }
      throw error;
    }
  };

  const send = (token: string) =>
    new Promise<Clip>((resolve, reject) => {
      const request = new XMLHttpRequest();
      xhr = request;
      request.open('POST', `/api/builds/${buildId}/clips`);
      request.withCredentials = true;
      request.responseType = 'text';
      request.setRequestHeader('Accept', 'application/json');
      request.setRequestHeader(csrfHeaderName, token);
      request.upload.onprogress = (event) => {
        onProgress?.({ loaded: event.loaded, total: event.lengthComputable ? event.total : null });
      };
      request.onload = () => {
        const json = parseJson(request.responseText);
        if (request.status >= 200 && request.status < 300) {
          const parsed = clipResponseSchema.safeParse(json);
          if (parsed.success) resolve(parsed.data.clip);
          else
            reject(
              new ApiError(
                request.status,
                clientErrorCodes.unexpectedResponse,
                'The server accepted the file but answered in a shape this page does not understand. Reload the page to see whether the clip arrived.',
              ),
            );
          return;
        }
        reject(errorFrom(request.status, json));
      };
      request.onerror = () =>
        reject(
          new ApiError(0, clientErrorCodes.network, 'The upload was cut off: Benchproof could not be reached. Check your connection, then try again.'),
        );
      request.onabort = () => reject(abortError());
      const body = new FormData();
      if (title) body.append('title', title);
      // The file last: multer reads text fields only if they come before it.
      body.append(clipUploadField, file, file.name);
      request.send(body);
    });

  return {
    done: attempt(false),
    abort: () => {
      aborted = true;
      xhr?.abort();
    },
  };
}

function parseJson(text: string): unknown {
  try {
    return JSON.parse(text);
  } catch {
    return null;
  }
}

function errorFrom(status: number, json: unknown): ApiError {
  const body = readErrorBody(json);
  if (body) return new ApiError(status, body.code, body.message, body.details);
  // No error body: a proxy or the server's body limit answered before our code did.
  if (status === 413) return new ApiError(status, 'too_large', 'The file is larger than the server accepts. Trim or re-encode it smaller, then upload again.');
  if (status === 401) return new ApiError(status, 'http_401', 'You are not signed in. Sign in again, then upload the file again.');
  if (status >= 500) return new ApiError(status, `http_${status}`, 'The server ran into a problem with this file. Try again in a moment.');
  return new ApiError(status, `http_${status}`, `The upload failed (HTTP ${status}).`);
}

function abortError(): DOMException {
  return new DOMException('The upload was cancelled.', 'AbortError');
}

/** True for the rejection `abort()` causes. */
export function isAbortError(error: unknown): boolean {
  return error instanceof DOMException && error.name === 'AbortError';
}
