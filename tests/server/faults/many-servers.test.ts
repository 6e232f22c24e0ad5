import { spawn, type ChildProcess } from 'node:child_process';
import fs from 'node:fs';
import net from 'node:net';
import os from 'node:os';
import path from 'node:path';
import request from 'supertest';
import { afterAll, beforeAll, describe, expect, inject, it } from 'vitest';
import { publicStorySchema } from '@shared/public/public-story.schema';
import { repoRoot } from '../../../scripts/lib/bootstrap';
import { fakeAccounts } from '../../../scripts/lib/run-local';
import { createFakeGithub } from '../../../server/fakes/github/fake-github';
import { makeTestClip } from '../../support/clips';
import type { Session } from '../../support/matrix-fixtures';
import { makeReviewFixture, publishThroughReview } from '../../support/review-fixtures';
import { startS3Fake, type S3Fake } from '../../support/s3-fake';
import { cookieHeader, eventually } from '../../support/tus';

/*
 * More than one machine: two web processes with no worker of their own (WORKER=off) and one
 * worker process (`scripts/worker.ts`, what `npm run worker` runs), all on one database and one
 * S3 bucket (the fake), each with its own port and scratch folder, as separate machines would be.
 * A session made on one web process works on the other; a clip uploaded to one is processed by
 * the worker and plays from both; a story published through one is served by the other at once.
 */

type Agent = ReturnType<typeof request.agent>;

const fake = createFakeGithub({ clientId: 'benchproof-local', clientSecret: 'benchproof-local-secret', accounts: fakeAccounts(), port: 0 });
let s3: S3Fake;
let work: string;
let clipFile: string;
const web: { url: string; proc: ChildProcess }[] = [];
let worker: ChildProcess | null = null;
let output = '';

async function freePort(): Promise<number> {
  return new Promise((resolve, reject) => {
    const probe = net.createServer();
    probe.once('error', reject);
    probe.listen(0, '127.0.0.1', () => {
      const { port } = probe.address() as net.AddressInfo;
      probe.close(() => resolve(port));
    });
  });
}

function envFor(name: string, extra: Record<string, string>): NodeJS.ProcessEnv {
  return {
    PATH: process.env.PATH,
    HOME: process.env.HOME,
    NODE_ENV: 'test',
    DATABASE_URL: inject('databaseUrl'),
    // One secret everywhere, so a session cookie signed by one process is read by the others.
    SESSION_SECRET: 'many-servers-test-session-secret',
    // Each "machine" has its own disk for scratch work; the media live in the bucket.
    MEDIA_DIR: path.join(work, name),
    CLIENT_DIR: path.join(work, 'no-client'),
    STORAGE_DRIVER: 's3',
    S3_BUCKET: s3.bucket,
    S3_REGION: s3.region,
    S3_ENDPOINT: s3.endpoint,
    S3_FORCE_PATH_STYLE: '1',
    S3_ACCESS_KEY_ID: s3.accessKeyId,
    S3_SECRET_ACCESS_KEY: s3.secretAccessKey,
    LOG_LEVEL: 'warn',
    JOB_QUEUE_PREFIX: `many${process.pid}`,
    ...extra,
  };
}

function spawnLogged(args: string[], env: NodeJS.ProcessEnv): ChildProcess {
  const proc = spawn(process.execPath, ['--import', 'tsx', ...args], { cwd: repoRoot, env, stdio: ['ignore', 'pipe', 'pipe'] });
  proc.stdout!.on('data', (d: Buffer) => (output += d.toString()));
  proc.stderr!.on('data', (d: Buffer) => (output += d.toString()));
  return proc;
}

async function startWeb(name: string): Promise<{ url: string; proc: ChildProcess }> {
  const port = await freePort();
  const url = `http://127.0.0.1:${port}`;
  const proc = spawnLogged(['server/index.ts'], envFor(name, { HOST: '127.0.0.1', PORT: String(port), PUBLIC_URL: url, FAKE_GITHUB_URL: fakeUrl, WORKER: 'off' }));
  const up = await eventually(async () => {
    if (proc.exitCode !== null) throw new Error('exited');
    return (await fetch(`${url}/api/health`)).status === 200;
  }, 90_000, 250);
  if (!up) {
    proc.kill('SIGKILL');
    throw new Error(`web process ${name} did not start:\n${output.slice(-2000)}`);
  }
  return { url, proc };
}

async function stop(proc: ChildProcess | null) {
  if (!proc || proc.exitCode !== null || proc.signalCode !== null) return;
  const exited = new Promise((resolve) => proc.once('exit', resolve));
  proc.kill('SIGTERM');
  const timer = setTimeout(() => proc.kill('SIGKILL'), 10_000);
  await exited;
  clearTimeout(timer);
}

/** The OAuth round trip against one web process and the fake provider; a session there. */
async function sessionOn(url: string, login: string): Promise<Session & { agent: Agent }> {
  const agent = request.agent(url);
  const start = await agent.get(`/auth/github?login=${encodeURIComponent(login)}`).expect(302);
  const authorize = await fetch(start.headers.location!, { redirect: 'manual' });
  const callback = new URL(authorize.headers.get('location')!);
  await agent.get(callback.pathname + callback.search).expect(302);
  const token = (await agent.get('/api/csrf-token').expect(200)).body.token as string;
  return { agent, token };
}

let fakeUrl = '';

beforeAll(async () => {
  work = fs.mkdtempSync(path.join(os.tmpdir(), 'benchproof-many-servers-'));
  clipFile = await makeTestClip({ seconds: 2, format: 'mp4-h264', dir: work, name: 'many-servers' });
  fakeUrl = await fake.listen();
  s3 = await startS3Fake();
  web.push(await startWeb('web-a'), await startWeb('web-b'));
  worker = spawnLogged(['scripts/worker.ts'], envFor('worker', {}));
}, 240_000);

afterAll(async () => {
  await Promise.all([...web.map((w) => stop(w.proc)), stop(worker)]);
  await fake.close();
  await s3?.stop();
  if (work) fs.rmSync(work, { recursive: true, force: true });
}, 60_000);

describe('two web processes and one worker on one database and one bucket', () => {
  it('a session made on one works on the other, with its CSRF token', async () => {
    const [a, b] = web as [(typeof web)[0], (typeof web)[0]];
    const builder = await sessionOn(a.url, 'demo-builder');
    const cookie = cookieHeader(builder.agent);
    const me = await request(b.url).get('/api/me').set('Cookie', cookie).expect(200);
    expect(me.body.user.login).toBe('demo-builder');
    // A write on the other process, with the token the first one handed out.
    const made = await request(b.url).post('/api/builds').set('Cookie', cookie).set('x-csrf-token', builder.token).send({ title: 'Made on the second web process (test)' });
    expect(made.status).toBe(201);
  }, 60_000);

  it('a clip uploaded to one is processed by the worker and plays from both; a story published through one is public on the other at once', async () => {
    const [a, b] = web as [(typeof web)[0], (typeof web)[0]];
    const owner = await sessionOn(a.url, 'demo-builder');
    const moderator = await sessionOn(b.url, 'demo-moderator');
    // Uploaded through A (the fixture waits until the worker has made the clip ready).
    const f = await makeReviewFixture(owner, { clipFile, title: 'Published across machines (test)' });
    const cookie = cookieHeader(owner.agent);
    for (const url of [a.url, b.url]) {
      const video = await request(url).get(`/api/clips/${f.clipId}/video`).set('Cookie', cookie).set('Range', 'bytes=0-99');
      expect(video.status, url).toBe(206);
      expect(video.headers['content-range']).toMatch(/^bytes 0-99\/\d+$/);
    }
    // Sent for review on A, checked and published by a moderator on B.
    await publishThroughReview(owner, moderator, f);
    for (const url of [b.url, a.url]) {
      const page = publicStorySchema.parse((await request(url).get(`/api/public/stories/${f.story.id}`).expect(200)).body);
      expect(page.title).toBe(f.story.title);
      expect(page.revision).toBe(1);
    }
    // The home list of the other process has it too.
    const list = await request(a.url).get('/api/public/stories').expect(200);
    expect((list.body.items as { storyId: number }[]).map((i) => i.storyId)).toContain(f.story.id);
  }, 180_000);
});
