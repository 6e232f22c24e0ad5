// Prints every API route the app mounts (for the authorization matrix and the docs).
import { createApp } from '../server/app';
import { loadConfig } from '../server/config';
import { createSequelize } from '../server/db/sequelize';
import { initModels } from '../server/db/models';
import { createLogger } from '../server/logger';
import { listRoutes } from '../server/http/routes';
import { localStorage } from '../server/storage/local-storage';

const config = loadConfig({ ...process.env, LOG_LEVEL: 'silent', NODE_ENV: 'test' });
const sequelize = createSequelize(config.databaseUrl);
initModels(sequelize);
const built = createApp({ config, sequelize, logger: createLogger(config), storage: localStorage(config.mediaDir), queue: null });
for (const r of listRoutes(built.app)) console.log(`${r.method} ${r.path}`);
await built.close();
await sequelize.close();
