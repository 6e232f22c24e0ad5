import type { z } from 'zod';
import {
  csrfHeaderName,
  csrfTokenResponseSchema,
  errorBodySchema,
  type ErrorDetail,
} from '@shared/http/error.schema';

/** An API call that failed, with the server's error body (or a client-made one). */
export class ApiError extends Error {
  readonly status: number;
  readonly code: string;
  readonly details: ErrorDetail[];

  constructor(status: number, code: string, message: string, details: ErrorDetail[] = []) {
    super(message);
    this.name = 'ApiError';
    this.status = status;
    this.code = code;
    this.details = details;
  }

  /** True for errors the caller caused (bad input, not allowed, conflict): retrying will not help. */
  get isClientError(): boolean {
    return this.status >= 400 && this.status < 500;
  }
}

/** Codes the client itself produces when there is no usable server error body. */
export const clientErrorCodes = {
  network: 'network_error',
  unexpectedResponse: 'unexpected_response',
} as const;

type HttpMethod = 'GET' | 'POST' | 'PUT' | 'PATCH' | 'DELETE';

export interface ApiFetchOptions<T> {
  method?: HttpMethod;
  /** Sent as JSON. */
  body?: unknown;
  /** Validates the success body; the result is typed from it. */
  schema?: z.ZodType<T>;
  signal?: AbortSignal;
}

/** Error code the server sends when the CSRF token is missing or stale. */
export const CSRF_INVALID = 'csrf_invalid';

let csrfTokenPromise: Promise<string> | null = null;

/** The session's CSRF token (fetched once, cached), for requests that cannot go through `apiFetch` (XHR uploads). */
export function getCsrfToken(): Promise<string> {
  csrfTokenPromise ??= apiFetch('/api/csrf-token', { schema: csrfTokenResponseSchema })
    .then(({ token }) => token)
    .catch((error: unknown) => {
      // Do not cache a failure: the next request asks again.
      csrfTokenPromise = null;
      throw error;
    });
  return csrfTokenPromise;
}

/** Forgets the cached CSRF token; call after the session changes (sign-out). */
export function clearCsrfToken(): void {
  csrfTokenPromise = null;
}

/**
 * The one way the client talks to the server: JSON in and out, same-origin
 * cookies, the CSRF header on every state-changing request (refreshed once if
 * the server says it is stale), and every failure as an `ApiError`.
 */
export async function apiFetch<T = unknown>(path: string, options: ApiFetchOptions<T> = {}): Promise<T> {
  const method = options.method ?? 'GET';
  const response = await send(path, method, options, false);
  return readSuccess(response, options.schema);
}

async function send<T>(
  path: string,
  method: HttpMethod,
  options: ApiFetchOptions<T>,
  isRetry: boolean,
): Promise<Response> {
  const headers = new Headers({ Accept: 'application/json' });
  if (options.body !== undefined) headers.set('Content-Type', 'application/json');
  if (method !== 'GET') headers.set(csrfHeaderName, await getCsrfToken());

  let response: Response;
  try {
    response = await fetch(path, {
      method,
      headers,
      credentials: 'same-origin',
      body: options.body === undefined ? undefined : JSON.stringify(options.body),
      signal: options.signal,
    });
  } catch (cause) {
    if (cause instanceof DOMException && cause.name === 'AbortError') throw cause;
    throw new ApiError(
      0,
      clientErrorCodes.network,
      'Benchproof could not be reached. Check your connection, then try again.',
    );
  }

  if (response.ok) return response;

  const error = await readError(response);
  if (error.status === 403 && error.code === CSRF_INVALID && method !== 'GET' && !isRetry) {
    clearCsrfToken();
    return send(path, method, options, true);
  }
  throw error;
}

async function readSuccess<T>(response: Response, schema: z.ZodType<T> | undefined): Promise<T> {
  const isJson = response.headers.get('content-type')?.includes('application/json') ?? false;
  if (response.status === 204 || !isJson) {
    if (schema) {
      throw new ApiError(response.status, clientErrorCodes.unexpectedResponse, 'The server sent no data where some was expected.');
    }
    return undefined as T;
  }
  const json: unknown = await response.json();
  if (!schema) return json as T;
  const parsed = schema.safeParse(json);
  if (!parsed.success) {
    throw new ApiError(
      response.status,
      clientErrorCodes.unexpectedResponse,
      'The server sent data in a shape this page does not understand. Reload the page; if it persists, tell the site admin.',
    );
  }
  return parsed.data;
}

async function readError(response: Response): Promise<ApiError> {
  let json: unknown = null;
  try {
    json = await response.json();
  } catch {
    // Not JSON (a proxy page, an empty body): fall through to the generic error below.
  }
  const parsed = errorBodySchema.safeParse(json);
  if (parsed.success) {
    const { code, message, details } = parsed.data.error;
    return new ApiError(response.status, code, message, details);
  }
  return new ApiError(response.status, `http_${response.status}`, genericMessage(response.status));
}

function genericMessage(status: number): string {
  if (status === 401) return 'You are not signed in.';
  if (status === 403) return 'Your account is not allowed to do this.';
  if (status === 404) return 'Nothing was found at this address.';
  if (status >= 500) return 'The server ran into a problem. Try again in a moment.';
  return `The request failed (HTTP ${status}).`;
}

/** A message for any thrown value, for error states and toasts. */
export function errorMessage(error: unknown): string {
  if (error instanceof ApiError) return error.message;
  if (error instanceof Error && error.message) return error.message;
  return 'Something went wrong.';
}
