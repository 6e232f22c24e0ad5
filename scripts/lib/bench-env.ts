import crypto from 'node:crypto';
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import type http from 'node:http';
import type { Sequelize } from 'sequelize';
import request from 'supertest';
import { loadConfig, type Config } from '../../server/config';
import { initModels } from '../../server/db/models';
import { createSequelize } from '../../server/db/sequelize';
import { Build } from '../../server/features/builds/build.model';
import { Clip } from '../../server/features/clips/clip.model';
import { Instrument } from '../../server/features/instruments/instrument.model';
import { SpecVersion, Spec } from '../../server/features/specs/spec.model';
import { User } from '../../server/features/users/user.model';
import { createLogger } from '../../server/logger';
import { prepareDatabase, repoRoot } from './bootstrap';

export interface BenchEnvironment {
  config: Config;
  sequelize: Sequelize;
  logger: ReturnType<typeof createLogger>;
  mediaDir: string;
  /** Closes the connections, stops the cluster and deletes the media folder. */
  close(): Promise<void>;
}

/**
 * What a benchmark runs on: its own throwaway cluster in `.data/<name>` (fresh, with the demo
 * people seeded; never the demo or test data), on BENCH_PG_PORT or `defaultPort`, a temporary
 * media folder, the parsed config and models.
 */
export async function benchEnvironment(name: string, defaultPort: number, env: Record<string, string> = {}): Promise<BenchEnvironment> {
  const db = await prepareDatabase({
    dataDir: path.join(repoRoot, '.data', name),
    port: Number(process.env.BENCH_PG_PORT ?? defaultPort),
    database: name.replace(/^postgres-/, 'benchproof_').replace(/-/g, '_'),
    seed: true,
    fresh: true,
    throwaway: true,
  });
  const mediaDir = fs.mkdtempSync(path.join(os.tmpdir(), `benchproof-${name}-media-`));
  const config = loadConfig({ NODE_ENV: 'test', DATABASE_URL: db.databaseUrl, MEDIA_DIR: mediaDir, LOG_LEVEL: 'silent', SESSION_SECRET: crypto.randomBytes(24).toString('hex'), ...env });
  const sequelize = createSequelize(config.databaseUrl);
  initModels(sequelize);
  return {
    config,
    sequelize,
    logger: createLogger(config),
    mediaDir,
    async close() {
      await sequelize.close();
      db.postgres?.stop();
      fs.rmSync(mediaDir, { recursive: true, force: true });
    },
  };
}

/** A signed-in client: a cookie jar and its CSRF token. */
export interface BenchSession {
  agent: ReturnType<typeof request.agent>;
  token: string;
}

/** Signs in through the whole round trip with the local provider (the app's FAKE_GITHUB_URL). */
export async function benchSession(app: http.RequestListener | http.Server, login: string): Promise<BenchSession> {
  const agent = request.agent(app);
  const start = await agent.get(`/auth/github?login=${encodeURIComponent(login)}`).expect(302);
  const authorize = await fetch(start.headers.location!, { redirect: 'manual' });
  const callback = new URL(authorize.headers.get('location')!);
  const done = await agent.get(callback.pathname + callback.search);
  if (done.status !== 302 || done.headers.location?.startsWith('/sign-in')) throw new Error(`sign-in as ${login} did not complete: ${done.status}`);
  const token = (await agent.get('/api/csrf-token').expect(200)).body.token as string;
  return { agent, token };
}

/**
 * What the story benches build on, from the seeded demo: the builder and the moderator, a new
 * build (invented), the builder's outside micrometer and the crank end-float spec version.
 */
export async function benchFixtures(build: { title: string; subject: string }) {
  const owner = (await User.findOne({ where: { login: 'demo-builder' } }))!;
  const moderator = (await User.findOne({ where: { login: 'demo-moderator' } }))!;
  const row = await Build.create({ ownerId: owner.id, ...build });
  const mic = (await Instrument.findOne({ where: { ownerId: owner.id, serial: 'MV-OM-01' } }))!;
  const spec = (await Spec.findOne({ where: { name: 'Vellum 1100 crank end float' } }))!;
  const version = (await SpecVersion.findOne({ where: { specId: spec.id } }))!;
  return { owner, moderator, build: row, mic, version };
}

/** A clip row that is ready to cite (a 60 s 1280×720 H.264 file in name only: no media is made). */
export function readyClip(buildId: number, title: string, position: number, originalName: string) {
  return Clip.create({
    buildId,
    title,
    position,
    status: 'ready',
    originalName,
    sizeBytes: 1_000_000,
    container: 'mp4',
    storagePrefix: crypto.randomUUID(),
    probe: { container: 'mp4', videoCodec: 'h264', audioCodec: null, durationS: 60, width: 1280, height: 720, frameRate: 30, rotation: 0 },
    webCopy: 'original',
  });
}
