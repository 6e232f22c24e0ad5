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

/** Makes an invented build through the API from a signed-in page; its id. */
export async function newBuild(page: Page, fields: { title: string; subject?: string; parts: { name: string; serial?: string }[] }): Promise<number> {
  const build = await api<{ build: { id: number } }>(page, 'POST', '/api/builds', fields);
  if (build.status !== 201) throw new Error(`the build was not made: ${build.status} ${JSON.stringify(build.json)}`);
  return build.json.build.id;
}

/**
 * Uploads a clip in the build's workspace as a builder would (the file chooser), waits until it
 * is processed, and gives its id; the build must have no other clip.
 */
export async function uploadClipInWorkspace(page: Page, siteUrl: string, buildId: number, file: string): Promise<number> {
  await page.goto(`${siteUrl}/builds/${buildId}`);
  await page.locator('input[type=file]').setInputFiles([file]);
  await page.locator('ol[aria-label="Clips in timeline order"] >> text=Ready').first().waitFor({ timeout: 90_000 });
  const clips = await api<{ items: { id: number }[] }>(page, 'GET', `/api/builds/${buildId}/clips`);
  return clips.json.items[0]!.id;
}
