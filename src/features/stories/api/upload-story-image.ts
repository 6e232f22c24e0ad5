import { csrfHeaderName } from '@shared/http/csrf';
import { storyImageAltField, storyImageResponseSchema, storyImageTypes, storyImageUploadField, type StoryImage } from '@shared/stories/story.schema';
import { ApiError, apiErrorFromBody, readErrorBody, CSRF_INVALID, clearCsrfToken, clientErrorCodes, getCsrfToken } from '@/lib/api';

/**
 * Largest image the editor sends. The server's own limit (STORY_IMAGE_MAX_BYTES, 10 MiB unless
 * set otherwise) decides; this only spares a long upload that would be refused anyway.
 */
export const MAX_STORY_IMAGE_BYTES = 10 * 1024 * 1024;

/** Why a file cannot go into an entry, or null. The server checks the bytes again; this checks what the browser says. */
export function imageRefusal(file: File): string | null {
  if (!(storyImageTypes as readonly string[]).includes(file.type)) {
    return `“${file.name}” is not a JPEG, PNG or WebP image. Save it in one of those formats, then add it again.`;
  }
  if (file.size === 0) return `“${file.name}” is empty. Pick the image file again.`;
  if (file.size > MAX_STORY_IMAGE_BYTES) {
    const mb = (file.size / (1024 * 1024)).toFixed(1);
    return `“${file.name}” is ${mb} MB; images can be at most ${MAX_STORY_IMAGE_BYTES / (1024 * 1024)} MB. Export it smaller, then add it again.`;
  }
  return null;
}

/**
 * POST /api/stories/:storyId/images as multipart. XMLHttpRequest because only XHR reports upload
 * progress; sends the CSRF header like `apiFetch` and retries once with a fresh token if stale.
 */
export function uploadStoryImage(
  storyId: number,
  file: File,
  { alt, onProgress }: { alt?: string; onProgress?: (fraction: number | null) => void } = {},
): Promise<StoryImage> {
  const send = (token: string) =>
    new Promise<StoryImage>((resolve, reject) => {
      const request = new XMLHttpRequest();
      request.open('POST', `/api/stories/${storyId}/images`);
      request.withCredentials = true;
      request.responseType = 'text';
      request.setRequestHeader('Accept', 'application/json');
      request.setRequestHeader(csrfHeaderName, token);
      request.upload.onprogress = (event) => onProgress?.(event.lengthComputable ? event.loaded / event.total : null);
      request.onload = () => {
        const json = parseJson(request.responseText);
        if (request.status >= 200 && request.status < 300) {
          const parsed = storyImageResponseSchema.safeParse(json);
          if (parsed.success) resolve(parsed.data.image);
          else reject(new ApiError(request.status, clientErrorCodes.unexpectedResponse, 'The server took the image but answered in a shape this page does not understand. Reload the page to see whether it arrived.'));
          return;
        }
        reject(errorFrom(request.status, json));
      };
      request.onerror = () =>
        reject(new ApiError(0, clientErrorCodes.network, 'The upload was cut off: Benchproof could not be reached. Check your connection, then add the image again.'));
      const body = new FormData();
      // Text fields before the file: multer reads them only if they come first.
      if (alt) body.append(storyImageAltField, alt);
      body.append(storyImageUploadField, file, file.name);
      request.send(body);
    });

  return (async () => {
    const token = await getCsrfToken();
    try {
      return await send(token);
    } catch (error) {
      if (error instanceof ApiError && error.status === 403 && error.code === CSRF_INVALID) {
        clearCsrfToken();
        return send(await getCsrfToken());
      }
      throw error;
    }
  })();
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
  if (body) return apiErrorFromBody(status, body);
  if (status === 413) return new ApiError(status, 'too_large', 'The image is larger than the server accepts. Export it smaller, then add it again.');
  if (status >= 500) return new ApiError(status, `http_${status}`, 'The server ran into a problem with this image. Try again in a moment.');
  return new ApiError(status, `http_${status}`, `The upload failed (HTTP ${status}).`);
}
