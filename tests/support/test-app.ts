import fs from 'node:fs';
import http from 'node:http';
import os from 'node:os';
import path from 'node:path';
import { inject } from 'vitest';
import request from 'supertest';
import { createApp } from '../../server/app';
import { loadConfig } from '../../server/config';
import { createSequelize } from '../../server/db/sequelize';
import { initModels } from '../../server/db/models';
import { createLogger } from '../../server/logger';
import { createFakeGithub, type FakeAccount } from '../../server/fakes/github/fake-github';
import { createFakeSmtp } from '../../server/fakes/smtp/fake-smtp';
import { startMailWorker } from '../../server/mail/mail.job';
import { fakeAccounts } from '../../scripts/lib/run-local';
import { startClipWorker, type ClipJobDeps } from '../../server/features/clips/clip.job';
import { startQueue } from '../../server/jobs/queue';
import { storageFromConfig } from '../../server/storage/select-storage';

export interface TestAppOptions {
  /** Start the job queue and the clip worker (own queue names, so test files never share jobs). */
  jobs?: boolean;
  faultAt?: ClipJobDeps['faultAt'];
  /** With env.DATABASE_URL: bind the models to that database too (only for a file that uses no other). */
  ownDatabase?: boolean;
  /** Also send queued mail (needs `jobs`) to this app's own capture server, `t.smtp`. */
  mail?: boolean;
}

let shared: ReturnType<typeof createSequelize> | null = null;
let users = 0;
function sharedSequelize() {
  if (!shared) {
    shared = createSequelize(inject('databaseUrl'));
    initModels(shared);
  }
  return shared;
}

/**
 * A real app on the test database with its own fake GitHub on a free loopback port.
 * Call in beforeAll; `close()` in afterAll.
 */
export async function startTestApp(env: Record<string, string> = {}, opts: TestAppOptions = {}) {
  const fakeBase = { clientId: 'benchproof-local', clientSecret: 'benchproof-local-secret' };
  const fake = createFakeGithub({ ...fakeBase, accounts: fakeAccounts(), port: 0 });
  const fakeUrl = await fake.listen();
  // Every app has its own capture server, so a test sees only the mail its app sent.
  const smtp = createFakeSmtp();
  const smtpUrls = await smtp.listen();
  const mediaDir = fs.mkdtempSync(path.join(os.tmpdir(), 'benchproof-media-'));
  const config = loadConfig({
    NODE_ENV: 'test',
    MEDIA_DIR: mediaDir,
    JOB_QUEUE_PREFIX: `t${process.pid}-${Math.floor(Math.random() * 1e6)}`,
    JOB_RETRY_LIMIT: '2',
    JOB_STALL_SECONDS: '5',
    DATABASE_URL: inject('databaseUrl'),
    FAKE_GITHUB_URL: fakeUrl,
    PUBLIC_URL: 'http://127.0.0.1:3999',
    LOG_LEVEL: 'silent',
    SIGN_IN_RATE_LIMIT: '1000',
    FAKE_SMTP_URL: smtpUrls.smtpUrl,
    FAKE_SMTP_API_URL: smtpUrls.apiUrl,
    MAIL_RETRY_DELAY_SECONDS: '1',
    ...env,
  });
  // Models are bound once per test file to the test database; an app given another
  // DATABASE_URL (to see a broken database) gets its own instance for health checks only.
  const own = env.DATABASE_URL ? createSequelize(config.databaseUrl) : null;
  // A test file that owns its whole database (a fault test that stops it) binds the models to it.
  if (own && opts.ownDatabase) initModels(own);
  const sequelize = own ?? sharedSequelize();
  if (!own) users += 1;
  const logger = createLogger(config);
  const storage = storageFromConfig(config.storage);
  const queue = opts.jobs ? await startQueue(config) : null;
  const worker = queue ? await startClipWorker(config, queue, { storage, logger, faultAt: opts.faultAt }) : null;
  const mailWorker = queue && opts.mail ? await startMailWorker(config, queue, { logger }) : null;
  const built = createApp({ config, sequelize, logger, storage, queue });
  // Signed-in agents talk to one listening server. Given the bare app, supertest listens and
  // closes a server per request, and closing it drops a connection the app has already answered
  // (a refused upload) while the client is still sending the body: EPIPE instead of the status.
  const server = http.createServer(built.app);
  await new Promise<void>((resolve) => server.listen(0, '127.0.0.1', resolve));
  return {
    app: built.app,
    server,
    config,
    fake,
    smtp,
    sequelize,
    storage,
    queue,
    worker,
    mediaDir: config.mediaDir,
    async close() {
      server.closeAllConnections();
      await new Promise<void>((resolve) => server.close(() => resolve()));
      await worker?.stop();
      await mailWorker?.stop();
      await queue?.boss.stop({ graceful: false, wait: true });
      await built.close();
      fs.rmSync(mediaDir, { recursive: true, force: true });
      await fake.close();
      await smtp.close();
      if (own) await own.close();
      else if (--users === 0) {
        await shared!.close();
        shared = null;
      }
    },
  };
}

export type TestApp = Awaited<ReturnType<typeof startTestApp>>;

/** A never-seen account in the fake provider, for tests that need a fresh person. */
export function freshAccount(t: TestApp, prefix = 'visitor'): FakeAccount {
  const n = Math.floor(Math.random() * 1e9);
  const account = { login: `${prefix}-${n}`.slice(0, 39), id: 2_000_000_000 + (n % 100_000_000), name: `Test ${prefix} ${n}`, email: `${prefix}-${n}@test.example` };
  t.fake.addAccount(account);
  return account;
}

/**
 * Signs in through the whole OAuth round trip (our /auth/github → the fake's authorize →
 * our callback) and returns a supertest agent holding the session cookie.
 */
export async function signIn(t: TestApp, login: string) {
  const agent = request.agent(t.server);
  const start = await agent.get(`/auth/github?login=${encodeURIComponent(login)}`).expect(302);
  const authorize = await fetch(start.headers.location!, { redirect: 'manual' });
  const callback = new URL(authorize.headers.get('location')!);
  const done = await agent.get(callback.pathname + callback.search);
  if (done.status !== 302 || done.headers.location?.startsWith('/sign-in')) {
    throw new Error(`sign-in as ${login} did not complete: ${done.status} ${done.headers.location}`);
  }
  return agent;
}

/** A CSRF token for an agent's session. */
export async function csrfToken(agent: ReturnType<typeof request.agent>) {
  const res = await agent.get('/api/csrf-token').expect(200);
  return res.body.token as string;
}
