import http from 'node:http';
import type { Config } from './config';
import { createApp } from './app';
import { createSequelize } from './db/sequelize';
import { initModels } from './db/models';
import { createLogger } from './logger';
import { startClipWorker } from './features/clips/clip.job';
import { startQueue } from './jobs/queue';
import { startMailWorker } from './mail/mail.job';
import { startWeeklyDigest } from './features/public/weekly-digest.job';
import { storageFromConfig } from './storage/select-storage';

/** Starts the API + client server; `stop()` drains connections and closes the database pools. */
export async function startServer(config: Config) {
  const logger = createLogger(config);
  const sequelize = createSequelize(config.databaseUrl);
  initModels(sequelize);
  await sequelize.authenticate();
  const storage = storageFromConfig(config.storage);
  const queue = await startQueue(config, logger);
  const worker = config.jobs.worker === 'inline' ? await startClipWorker(config, queue, { storage, logger }) : null;
  const mailWorker = config.jobs.worker === 'inline' ? await startMailWorker(config, queue, { logger }) : null;
  const digest = config.jobs.worker === 'inline' ? await startWeeklyDigest(config, queue, { logger }) : null;
  const { app, close } = createApp({ config, sequelize, logger, storage, queue });
  const server = http.createServer(app);
  await new Promise<void>((resolve, reject) => {
    server.once('error', reject);
    server.listen(config.port, config.host, () => resolve());
  });
  return {
    server,
    logger,
    storage,
    queue,
    async stop() {
      await new Promise<void>((resolve) => {
        server.close(() => resolve());
        server.closeIdleConnections();
        // Give in-flight requests a moment, then cut the rest.
        setTimeout(() => server.closeAllConnections(), 3000).unref();
      });
      await worker?.stop();
      await mailWorker?.stop();
      await digest?.stop();
      await queue.boss.stop({ graceful: true, timeout: 5000 });
      await close();
      await sequelize.close();
    },
  };
}
