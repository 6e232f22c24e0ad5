// Runs the server alone against an existing database (DATABASE_URL): for production-style use.
// `npm start` (scripts/start.ts) does the whole local set-up and then calls startServer too.
import { loadConfig } from './config';
import { logProcessFailures } from './logger';
import { startServer } from './server';

const config = loadConfig();
const running = await startServer(config);
logProcessFailures(running.logger);
running.logger.info(`Benchproof listening on http://${config.host}:${config.port}`);

let stopping = false;
for (const signal of ['SIGINT', 'SIGTERM'] as const) {
  process.on(signal, () => {
    if (stopping) return;
    stopping = true;
    running.logger.info(`${signal}: shutting down`);
    running.stop().then(
      () => process.exit(0),
      (err) => {
        running.logger.error({ err }, 'shutdown failed');
        process.exit(1);
      },
    );
  });
}
