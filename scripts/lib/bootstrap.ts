import path from 'node:path';
import { fileURLToPath } from 'node:url';
import { createSequelize } from '../../server/db/sequelize';
import { migrateUp } from '../../server/db/migrate';
import { initModels } from '../../server/db/models';
import { seedDemo, type SeedReport } from '../../server/db/seed';
import { ensureDatabase, ensurePostgres, type LocalPostgres } from './postgres';

/** The repository root. */
export const repoRoot = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '../..');

export interface PreparedDatabase {
  databaseUrl: string;
  postgres: LocalPostgres | null;
  migrated: string[];
  seed: SeedReport | null;
}

/**
 * Everything between "a machine with Node" and "a database ready to serve": the local cluster
 * (unless DATABASE_URL points elsewhere), the role and database, the migrations, the demo data.
 * Safe to run again: every step leaves what exists alone.
 */
export async function prepareDatabase(opts: {
  databaseUrl?: string;
  dataDir: string;
  port: number;
  database: string;
  seed: boolean;
  fresh?: boolean;
  throwaway?: boolean;
}): Promise<PreparedDatabase> {
  let postgres: LocalPostgres | null = null;
  let databaseUrl = opts.databaseUrl;
  if (!databaseUrl) {
    postgres = ensurePostgres({ dataDir: opts.dataDir, port: opts.port, throwaway: opts.throwaway });
    databaseUrl = await ensureDatabase({ port: opts.port, database: opts.database, user: 'benchproof', fresh: opts.fresh });
  }
  const sequelize = createSequelize(databaseUrl);
  try {
    initModels(sequelize);
    const migrated = await migrateUp(sequelize);
    const seed = opts.seed ? await seedDemo(sequelize) : null;
    return { databaseUrl, postgres, migrated, seed };
  } catch (err) {
    postgres?.stop();
    throw err;
  } finally {
    await sequelize.close();
  }
}
