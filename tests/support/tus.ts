import http from 'node:http';
import { createRequire } from 'node:module';
import type request from 'supertest';
import { User } from '../../server/features/users/user.model';
import { freshAccount, signIn, csrfToken, type TestApp } from './test-app';

type Agent = ReturnType<typeof request.agent>;

/** A tus Upload-Metadata value naming the file. */
export const metadataFor = (filename: string) => `filename ${Buffer.from(filename, 'utf8').toString('base64')}`;

/** POST …/uploads as tus 1.0.0 creates it (no body). */
export function createUpload(agent: Agent, token: string | null, buildId: number, size: number, filename: string) {
  let req = agent
    .post(`/api/builds/${buildId}/uploads`)
    .set('Tus-Resumable', '1.0.0')
    .set('Upload-Length', String(size))
    .set('Upload-Metadata', metadataFor(filename));
  if (token !== null) req = req.set('x-csrf-token', token);
  return req;
}

/** HEAD on an upload's URL. */
export function headUpload(agent: Agent, url: string) {
  return agent.head(url).set('Tus-Resumable', '1.0.0');
}

/** PATCH `bytes` at `offset`. */
export function patchUpload(agent: Agent, token: string | null, url: string, offset: number, bytes: Buffer) {
  let req = agent
    .patch(url)
    .set('Tus-Resumable', '1.0.0')
    .set('Upload-Offset', String(offset))
    .set('Content-Type', 'application/offset+octet-stream');
  if (token !== null) req = req.set('x-csrf-token', token);
  return req.send(bytes);
}

/** The Cookie header a supertest agent sends. */
export function cookieHeader(agent: Agent): string {
  const jar = (agent as unknown as { jar: { getCookies(info: unknown): { name: string; value: string }[] } }).jar;
  const { CookieAccessInfo } = createRequire(import.meta.url)('cookiejar') as { CookieAccessInfo: { All: unknown } };
  return jar
    .getCookies(CookieAccessInfo.All)
    .map((c) => `${c.name}=${c.value}`)
    .join('; ');
}

/**
 * A PATCH whose connection is cut, as a phone on shop Wi-Fi loses it: it declares the rest of the
 * file, sends `send` bytes of it, waits until `arrived()` says the server has them (or what it
 * keeps of them), then destroys the socket without ending the request.
 */
export async function cutPatch(opts: {
  baseUrl: string;
  url: string;
  cookie: string;
  token: string;
  file: Buffer;
  offset: number;
  send: number;
  arrived: () => Promise<boolean>;
  timeoutMs?: number;
}): Promise<void> {
  const target = new URL(opts.url, opts.baseUrl);
  const req = http.request({
    host: target.hostname,
    port: target.port,
    path: target.pathname,
    method: 'PATCH',
    headers: {
      Cookie: opts.cookie,
      'x-csrf-token': opts.token,
      'Tus-Resumable': '1.0.0',
      'Upload-Offset': String(opts.offset),
      'Content-Type': 'application/offset+octet-stream',
      'Content-Length': String(opts.file.length - opts.offset),
    },
  });
  let answered: number | null = null;
  req.on('response', (res) => {
    answered = res.statusCode ?? 0;
    res.resume();
  });
  // The cut makes the request fail on our side; that is the point.
  req.on('error', () => undefined);
  req.write(opts.file.subarray(opts.offset, opts.offset + opts.send));
  const end = Date.now() + (opts.timeoutMs ?? 30_000);
  try {
    while (!(await opts.arrived())) {
      if (answered !== null) throw new Error(`the server answered ${answered} before the connection was cut`);
      if (Date.now() > end) throw new Error('the server did not take the bytes sent before the cut');
      await new Promise((r) => setTimeout(r, 50));
    }
  } finally {
    req.destroy();
  }
}

/** A new account with the builder role, signed in: its own upload counts, shared with no other test. */
export async function freshBuilder(t: TestApp, prefix = 'uploader') {
  const account = freshAccount(t, prefix);
  // Signing in makes the account (a follower); the role is then set on the row, as an admin
  // would. Each request loads the account afresh, so the session has the role from here on.
  const agent = await signIn(t, account.login);
  const [changed] = await User.update({ role: 'builder' }, { where: { login: account.login } });
  if (changed !== 1) throw new Error(`no account ${account.login} to make a builder`);
  return { agent, token: await csrfToken(agent), login: account.login };
}

/** Polls until `check` holds; false when `ms` passed first. */
export async function eventually(check: () => Promise<boolean>, ms = 15_000, stepMs = 100): Promise<boolean> {
  const end = Date.now() + ms;
  for (;;) {
    if (await check().catch(() => false)) return true;
    if (Date.now() > end) return false;
    await new Promise((r) => setTimeout(r, stepMs));
  }
}
