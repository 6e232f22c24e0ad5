import path from 'node:path';
import { describe, expect, inject, it } from 'vitest';
import pg from 'pg';
import { prepareDatabase, repoRoot } from '../../../scripts/lib/bootstrap';
import { loadDemoBuilds, loadDemoPeople } from '../../../server/db/demo-content';

describe('the start-up bootstrap', () => {
  it('run twice, it neither duplicates nor wipes: no migration or demo row is made again, and edits stay', async () => {
    const testUrl = new URL(inject('databaseUrl'));
    const opts = {
      dataDir: path.resolve(repoRoot, process.env.BENCHPROOF_TEST_DATA_DIR ?? '.data/postgres-test'),
      port: Number(testUrl.port),
      database: 'benchproof_bootstrap_check',
      seed: true,
      fresh: false,
    };
    // Start from nothing: the first run makes the database.
    const first = await prepareDatabase({ ...opts, fresh: true });
    expect(first.postgres?.startedHere).toBe(false); // the test cluster is already up; it is reused
    expect(first.migrated.length).toBeGreaterThan(0);
    const everything = [...loadDemoPeople().map((p) => p.login), ...loadDemoBuilds().map((b) => `build: ${b.title}`)];
    expect(first.seed?.created.sort()).toEqual([...everything].sort());

    const client = new pg.Client({ connectionString: first.databaseUrl });
    await client.connect();
    try {
      await client.query(`UPDATE users SET role = 'moderator' WHERE login = 'demo-follower'`);
      const before = await client.query('SELECT count(*)::int AS n FROM users');

      const second = await prepareDatabase(opts);
      expect(second.migrated).toEqual([]);
      expect(second.seed?.created).toEqual([]);
      expect(second.seed?.kept.length).toBe(everything.length);
      const builds = await client.query('SELECT count(*)::int AS n FROM builds');
      expect(builds.rows[0].n).toBe(loadDemoBuilds().length);

      const after = await client.query('SELECT count(*)::int AS n FROM users');
      expect(after.rows[0].n).toBe(before.rows[0].n);
      const role = await client.query(`SELECT role FROM users WHERE login = 'demo-follower'`);
      expect(role.rows[0].role).toBe('moderator');
    } finally {
      await client.end();
    }
  });
});
