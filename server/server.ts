import http from 'node:http';
import type { Config } from './config';
import { createApp } from './app';
import { createSequelize } from './db/sequelize';
import { initModels } from './db/models';
import { createLogger } from './logger';

/** Starts the API + client server; `stop()` drains connections and closes the database pools. */
export async function startServer(config: Config) {
  const logger = createLogger(config);
  const sequelize = createSequelize(config.databaseUrl);
  initModels(sequelize);
  await sequelize.authenticate();
  const { app, close } = createApp({ config, sequelize, logger });
  const server = http.createServer(app);
  await new Promise<void>((resolve, reject) => {
    server.once('error', reject);
    server.listen(config.port, config.host, () => resolve());
  });
  return {
    server,
    logger,
    async stop() {
      await new Promise<void>((resolve) => {
        server.close(() => resolve());
        server.closeIdleConnections();
        // Give in-flight requests a moment, then cut the rest.
        setTimeout(() => server.closeAllConnections(), 3000).unref();
      });
      await close();
      await sequelize.close();
    },
  };
}
