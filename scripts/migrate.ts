// `npm run migrate`: runs pending migrations against DATABASE_URL or the local cluster.
import { prepareDatabase } from './lib/bootstrap';
import { localSettings } from './lib/run-local';

const s = localSettings();
const db = await prepareDatabase({ databaseUrl: process.env.DATABASE_URL, dataDir: s.dataDir, port: s.pgPort, database: s.database, seed: false });
console.log(db.migrated.length ? `ran: ${db.migrated.join(', ')}` : 'nothing to run');
db.postgres?.stop();
