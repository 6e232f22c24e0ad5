// `npm run worker`: the clip-processing and mail workers alone (for a second machine, or WORKER=off on the
// web server). Uses DATABASE_URL, or the local cluster that `npm start` made.
import { loadConfig } from '../server/config';
import { createSequelize } from '../server/db/sequelize';
import { initModels } from '../server/db/models';
import { startClipWorker } from '../server/features/clips/clip.job';
import { startQueue } from '../server/jobs/queue';
import { startMailWorker } from '../server/mail/mail.job';
import { startWeeklyDigest } from '../server/features/public/weekly-digest.job';
import { createLogger, logProcessFailures } from '../server/logger';
import { storageFromConfig } from '../server/storage/select-storage';
import { prepareDatabase } from './lib/bootstrap';
import { ensureSystemFfmpeg } from './lib/ffmpeg';
import { ensureSystemSpeech } from './lib/speech';
import { localSettings, onShutdown } from './lib/run-local';

ensureSystemFfmpeg();
ensureSystemSpeech();
const s = localSettings();
const db = await prepareDatabase({ databaseUrl: process.env.DATABASE_URL, dataDir: s.dataDir, port: s.pgPort, database: s.database, seed: false });
const config = loadConfig({ ...process.env, DATABASE_URL: db.databaseUrl });
const logger = createLogger(config);
const sequelize = createSequelize(config.databaseUrl);
initModels(sequelize);
const queue = await startQueue(config, logger);
logProcessFailures(logger);
const worker = await startClipWorker(config, queue, { storage: storageFromConfig(config.storage), logger });
const mailWorker = await startMailWorker(config, queue, { logger });
const digest = await startWeeklyDigest(config, queue, { logger });
logger.info('clip and mail workers running; Ctrl-C stops them');
onShutdown(async () => {
  await worker.stop();
  await mailWorker.stop();
  await digest.stop();
  await queue.boss.stop({ graceful: true, timeout: 10_000 });
  await sequelize.close();
  db.postgres?.stop();
});
