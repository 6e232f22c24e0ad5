import type { Page } from 'playwright-core';

/**
 * A JSON request from inside a signed-in page, with the session's CSRF token, as the client
 * makes it: the browser tests set up their fixtures through the API this way.
 */
export async function api<T>(page: Page, method: string, url: string, body?: unknown): Promise<{ status: number; json: T }> {
  return page.evaluate(
    async ({ method, url, body }) => {
      const { token } = (await (await fetch('/api/csrf-token')).json()) as { token: string };
      const response = await fetch(url, {
        method,
        headers: { 'content-type': 'application/json', 'x-csrf-token': token },
        body: body === undefined ? undefined : JSON.stringify(body),
      });
      return { status: response.status, json: response.status === 204 ? null : await response.json() };
    },
    { method, url, body },
  ) as Promise<{ status: number; json: T }>;
}
