import type { z } from 'zod';
import { csrfHeaderName } from '@shared/http/csrf';
import { isErrorCode, type ErrorCode } from '@shared/http/error-codes';
import type { ErrorBody, ErrorDetail } from '@shared/http/error.schema';

// This module is in every page's first load, so it imports no schema values: zod (~26 KB gzip)
// loads with the screens that validate forms or responses, not with the reader's story page.

/** What an ApiError's code may be: one the API sends, one the client makes, or `http_<status>` for a body that was not ours. */
export type ApiErrorCode = ErrorCode | (typeof clientErrorCodes)[keyof typeof clientErrorCodes] | `http_${number}`;

/** An API call that failed, with the server's error body (or a client-made one). */
export class ApiError extends Error {
  readonly status: number;
  readonly code: ApiErrorCode;
  readonly details: ErrorDetail[];

  constructor(status: number, code: ApiErrorCode, message: string, details: ErrorDetail[] = []) {
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
  /**
   * Validates the success body; the result is typed from it. Leave it out only where the type is
   * `Unparsed<typeof schema>` (the reader's first-load routes), so the bundle need not carry zod.
   */
  schema?: z.ZodType<T>;
  signal?: AbortSignal;
}

/** Error code the server sends when the CSRF token is missing or stale. */
export const CSRF_INVALID = 'csrf_invalid' satisfies ErrorCode;

let csrfTokenPromise: Promise<string> | null = null;

/** The session's CSRF token (fetched once, cached), for requests that cannot go through `apiFetch` (XHR uploads). */
export function getCsrfToken(): Promise<string> {
  csrfTokenPromise ??= apiFetch<unknown>('/api/csrf-token')
    .then((body) => {
      const token = (body as { token?: unknown } | null)?.token;
      if (typeof token !== 'string' || token === '') {
        throw new ApiError(200, clientErrorCodes.unexpectedResponse, 'The server sent no security token. Reload the page, then try again.');
      }
      return token;
    })
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
  const body = readErrorBody(json);
  if (body) return apiErrorFromBody(response.status, body);
  return new ApiError(response.status, `http_${response.status}`, genericMessage(response.status));
}

/**
 * An error body as an ApiError. A code this client does not know (a newer server) is named by
 * the status; the message stays the server's.
 */
export function apiErrorFromBody(status: number, body: ErrorBody['error']): ApiError {
  return new ApiError(status, isErrorCode(body.code) ? body.code : `http_${status}`, body.message, body.details);
}

/**
 * The fields of the one error body every failing response carries, or null when `json` is not
 * one. Reads exactly what `errorBodySchema` accepts and returns what it would (unknown keys
 * dropped, `details` defaulting to []), without loading zod; a test holds the two together.
 */
export function readErrorBody(json: unknown): ErrorBody['error'] | null {
  const error = isRecord(json) ? json.error : undefined;
  if (!isRecord(error) || typeof error.code !== 'string' || typeof error.message !== 'string') return null;
  const rawDetails = error.details === undefined ? [] : error.details;
  if (!Array.isArray(rawDetails)) return null;
  const details: ErrorDetail[] = [];
  for (const item of rawDetails) {
    if (!isRecord(item) || typeof item.message !== 'string') return null;
    if (item.path !== undefined && typeof item.path !== 'string') return null;
    details.push('path' in item ? { path: item.path as string | undefined, message: item.message } : { message: item.message });
  }
  return { code: error.code, message: error.message, details };
}

function isRecord(value: unknown): value is Record<string, unknown> {
  return typeof value === 'object' && value !== null && !Array.isArray(value);
}

/**
 * The type of a response the client reads without parsing it: the shared schema's parsed type,
 * which is what the server builds the body as. Only for schemas whose parsed form is itself valid
 * input, so parsing it again would change nothing (defaults and coercions are fine; a transform
 * that changes a type is not): for any other this is `never` and the call site does not compile.
 * The server's tests parse these responses with the same schemas.
 */
export type Unparsed<S extends z.ZodType> = [z.output<S>] extends [z.input<S>] ? z.output<S> : never;

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
