import { spawn, type ChildProcess } from 'node:child_process';
import fs from 'node:fs';
import net from 'node:net';
import os from 'node:os';
import path from 'node:path';
import request from 'supertest';
import { afterAll, beforeAll, describe, expect, inject, it } from 'vitest';
import { uploadClipIdHeader } from '@shared/clips/clip.schema';
import { repoRoot } from '../../../scripts/lib/bootstrap';
import { fakeAccounts } from '../../../scripts/lib/run-local';
import { createSequelize } from '../../../server/db/sequelize';
import { initModels } from '../../../server/db/models';
import { createFakeGithub } from '../../../server/fakes/github/fake-github';
import { Clip } from '../../../server/features/clips/clip.model';
import { User } from '../../../server/features/users/user.model';
import { makeTestClip } from '../../support/clips';
import { cookieHeader, createUpload, cutPatch, eventually, headUpload, patchUpload } from '../../support/tus';

/*
 * The server dies in the middle of a resumable upload (SIGKILL: no shutdown code runs) and is
 * started again: the upload carries on from the bytes that reached the disk, and becomes a clip.
 * The server runs as a child process (`node --import tsx server/index.ts`, as `npm start` runs
 * it) on the test database, with its own media folder and port; the sign-in goes through its
 * own fake GitHub, and the session lives in PostgreSQL, so it outlives the process.
 */

type Agent = ReturnType<typeof request.agent>;

const sequelize = createSequelize(inject('databaseUrl'));
initModels(sequelize);

const fake = createFakeGithub({ clientId: 'benchproof-local', clientSecret: 'benchproof-local-secret', accounts: fakeAccounts(), port: 0 });
let work: string;
let mediaDir: string;
let clipPath: string;
let port: number;
let baseUrl: string;
let env: NodeJS.ProcessEnv;
let child: ChildProcess | null = null;
let output = '';

async function freePort(): Promise<number> {
  return new Promise((resolve, reject) => {
    const probe = net.createServer();
    probe.once('error', reject);
    probe.listen(0, '127.0.0.1', () => {
      const { port: p } = probe.address() as net.AddressInfo;
      probe.close(() => resolve(p));
    });
  });
}

/** Starts the server process and waits until it answers its health check. */
async function startServer(): Promise<ChildProcess> {
  const proc = spawn(process.execPath, ['--import', 'tsx', 'server/index.ts'], { cwd: repoRoot, env, stdio: ['ignore', 'pipe', 'pipe'] });
  proc.stdout!.on('data', (d: Buffer) => (output += d.toString()));
  proc.stderr!.on('data', (d: Buffer) => (output += d.toString()));
  const up = await eventually(async () => {
    if (proc.exitCode !== null) throw new Error('exited');
    return (await fetch(`${baseUrl}/api/health`)).status === 200;
  }, 60_000, 200);
  if (!up) {
    proc.kill('SIGKILL');
    throw new Error(`the server did not start:\n${output.slice(-2000)}`);
  }
  return proc;
}

async function stopServer(proc: ChildProcess | null, signal: NodeJS.Signals) {
  if (!proc || proc.exitCode !== null || proc.signalCode !== null) return;
  const exited = new Promise((resolve) => proc.once('exit', resolve));
  proc.kill(signal);
  await exited;
}

/** The OAuth round trip against the child server and the fake provider. */
async function signIn(login: string): Promise<Agent> {
  const agent = request.agent(baseUrl);
  const start = await agent.get(`/auth/github?login=${encodeURIComponent(login)}`).expect(302);
  const authorize = await fetch(start.headers.location!, { redirect: 'manual' });
  const callback = new URL(authorize.headers.get('location')!);
  await agent.get(callback.pathname + callback.search).expect(302);
  return agent;
}

beforeAll(async () => {
  work = fs.mkdtempSync(path.join(os.tmpdir(), 'benchproof-upload-restart-'));
  mediaDir = path.join(work, 'media');
  clipPath = await makeTestClip({ seconds: 4, format: 'mp4-h264', dir: work, name: 'crank-end-float' });
  const fakeUrl = await fake.listen();
  port = await freePort();
  baseUrl = `http://127.0.0.1:${port}`;
  env = {
    PATH: process.env.PATH,
    HOME: process.env.HOME,
    NODE_ENV: 'test',
    HOST: '127.0.0.1',
    PORT: String(port),
    PUBLIC_URL: baseUrl,
    DATABASE_URL: inject('databaseUrl'),
    // One secret for both lives of the server, so the session cookie stays valid.
    SESSION_SECRET: 'upload-restart-test-session-secret',
    MEDIA_DIR: mediaDir,
    CLIENT_DIR: path.join(work, 'no-client'),
    FAKE_GITHUB_URL: fakeUrl,
    LOG_LEVEL: 'warn',
    WORKER: 'off',
    JOB_QUEUE_PREFIX: `restart${process.pid}`,
  };
  child = await startServer();
}, 120_000);

afterAll(async () => {
  await stopServer(child, 'SIGTERM');
  await fake.close();
  await sequelize.close();
  if (work) fs.rmSync(work, { recursive: true, force: true });
});

describe('the server is killed in the middle of a resumable upload', () => {
  it('after a restart, HEAD gives the bytes that reached the disk, and the rest of the file makes the clip', async () => {
    const login = `restart-${Date.now() % 1e8}`;
    fake.addAccount({ login, id: 2_100_000_000 + (Date.now() % 1e7), name: 'Restart tester', email: `${login}@test.example` });
    await (await signIn(login)).get('/api/me').expect(200);
    await User.update({ role: 'builder' }, { where: { login } });
    const agent = await signIn(login);
    const token = (await agent.get('/api/csrf-token').expect(200)).body.token as string;
    const build = await agent.post('/api/builds').set('x-csrf-token', token).send({ title: 'Crank end float, restarted server (test)' }).expect(201);
    const buildId = build.body.build.id as number;

    const file = fs.readFileSync(clipPath);
    const created = await createUpload(agent, token, buildId, file.length, 'crank-end-float.mp4').expect(201);
    const url = created.headers.location!;
    const onDisk = path.join(mediaDir, '.scratch', 'uploads', url.split('/').pop()!);
    const sent = Math.floor(file.length * 0.4);

    // 40 % arrives and is on disk; then the process is killed while the request is still open.
    await cutPatch({
      baseUrl,
      url,
      cookie: cookieHeader(agent),
      token,
      file,
      offset: 0,
      send: sent,
      arrived: async () => {
        if (!fs.existsSync(onDisk) || fs.statSync(onDisk).size < sent) return false;
        await stopServer(child, 'SIGKILL');
        return true;
      },
    });
    expect(child!.signalCode).toBe('SIGKILL');
    await expect(fetch(`${baseUrl}/api/health`)).rejects.toThrow();

    child = await startServer();
    const head = await headUpload(agent, url).expect(200);
    expect(head.headers['upload-offset']).toBe(String(sent));
    expect(head.headers['upload-length']).toBe(String(file.length));

    const done = await patchUpload(agent, token, url, sent, file.subarray(sent)).expect(204);
    const clipId = Number(done.headers[uploadClipIdHeader.toLowerCase()]);
    const clip = await Clip.findByPk(clipId);
    expect(clip).toMatchObject({ buildId, title: 'crank-end-float', originalName: 'crank-end-float.mp4' });
    expect(Number(clip!.sizeBytes)).toBe(file.length);
    const list = await agent.get(`/api/builds/${buildId}/clips`).expect(200);
    expect((list.body.items as { id: number }[]).map((c) => c.id)).toContain(clipId);
    // The stored original is the whole file, the bytes from before the kill and after it.
    const original = path.join(mediaDir, 'clips', clip!.storagePrefix, 'original');
    expect(fs.readFileSync(original).equals(file)).toBe(true);
  }, 180_000);
});
