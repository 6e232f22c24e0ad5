import crypto from 'node:crypto';
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import type { Sequelize } from 'sequelize';
import { loadConfig, type Config } from '../../server/config';
import { initModels } from '../../server/db/models';
import { createSequelize } from '../../server/db/sequelize';
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
export async function benchEnvironment(name: string, defaultPort: number): Promise<BenchEnvironment> {
  const db = await prepareDatabase({
    dataDir: path.join(repoRoot, '.data', name),
    port: Number(process.env.BENCH_PG_PORT ?? defaultPort),
    database: name.replace(/^postgres-/, 'benchproof_').replace(/-/g, '_'),
    seed: true,
    fresh: true,
    throwaway: true,
  });
  const mediaDir = fs.mkdtempSync(path.join(os.tmpdir(), `benchproof-${name}-media-`));
  const config = loadConfig({ NODE_ENV: 'test', DATABASE_URL: db.databaseUrl, MEDIA_DIR: mediaDir, LOG_LEVEL: 'silent', SESSION_SECRET: crypto.randomBytes(24).toString('hex') });
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
