import path from 'node:path';
import type { TestProject } from 'vitest/node';
import { prepareDatabase, repoRoot } from '../../scripts/lib/bootstrap';

declare module 'vitest' {
  export interface ProvidedContext {
    databaseUrl: string;
  }
}

/**
 * Starts the test cluster (its own folder and port, never the demo data), recreates the test
 * database from nothing, migrates and seeds it. BENCHPROOF_NO_DB=1 skips all of it for pure
 * unit runs.
 */
export default async function setup(project: TestProject) {
  if (process.env.BENCHPROOF_NO_DB === '1') return;
  const db = await prepareDatabase({
    databaseUrl: process.env.TEST_DATABASE_URL,
    dataDir: path.resolve(repoRoot, process.env.BENCHPROOF_TEST_DATA_DIR ?? '.data/postgres-test'),
    port: Number(process.env.BENCHPROOF_TEST_PG_PORT ?? 54330),
    database: 'benchproof_test',
    seed: true,
    fresh: !process.env.TEST_DATABASE_URL,
    throwaway: true,
  });
  project.provide('databaseUrl', db.databaseUrl);
  return () => db.postgres?.stop();
}
