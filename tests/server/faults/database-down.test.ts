import os from 'node:os';
import path from 'node:path';
import fs from 'node:fs';
import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { prepareDatabase } from '../../../scripts/lib/bootstrap';
import { ensurePostgres } from '../../../scripts/lib/postgres';
import { Build } from '../../../server/features/builds/build.model';
import { csrfToken, signIn, startTestApp, type TestApp } from '../../support/test-app';

/*
 * PostgreSQL stopped under a running server: requests are answered 503 with a message (never a
 * 500 or a hang), nothing is half-written, and the server recovers by itself when the database
 * is back. The file runs its own throwaway cluster (its own port and folder) so stopping it
 * touches no other test.
 */

const port = 55000 + (process.pid % 900);
const dataDir = path.join(os.tmpdir(), `benchproof-fault-pg-${process.pid}`);
let t: TestApp;
let stopPg: () => void;

beforeAll(async () => {
  const db = await prepareDatabase({ dataDir, port, database: 'benchproof_fault', seed: true, fresh: true, throwaway: true });
  stopPg = () => db.postgres?.stop();
  t = await startTestApp({ DATABASE_URL: db.databaseUrl }, { ownDatabase: true });
}, 120_000);

afterAll(async () => {
  await t?.close();
  stopPg?.();
  fs.rmSync(dataDir, { recursive: true, force: true });
});

async function eventually(fn: () => Promise<boolean>, ms = 30_000) {
  const end = Date.now() + ms;
  while (Date.now() < end) {
    if (await fn().catch(() => false)) return true;
    await new Promise((r) => setTimeout(r, 250));
  }
  return false;
}

describe('the database goes away and comes back', () => {
  it('answers 503 with a message while it is down, writes nothing, and serves again by itself once it is back', async () => {
    const builder = await signIn(t, 'demo-builder');
    const token = await csrfToken(builder);
    await builder.get('/api/builds').expect(200);
    const before = await Build.count();

    stopPg();
    for (const res of [await builder.get('/api/builds'), await builder.post('/api/builds').set('x-csrf-token', token).send({ title: 'Written while the database was down (test)' }), await request(t.app).get('/api/health')]) {
      expect(res.status).toBe(503);
      expect(res.body.error.code).toMatch(/^database_(unavailable|unreachable)$/);
      expect(res.body.error.message).toMatch(/database/i);
    }

    // Back on the same folder and port; the pools reconnect on their own.
    ensurePostgres({ dataDir, port, throwaway: true });
    expect(await eventually(async () => (await request(t.app).get('/api/health')).status === 200)).toBe(true);
    expect(await eventually(async () => (await builder.get('/api/builds')).status === 200)).toBe(true);
    // Nothing of the refused write was stored; the session survived the outage.
    expect(await Build.count()).toBe(before);
    expect((await builder.get('/api/me').expect(200)).body.user.login).toBe('demo-builder');
  }, 90_000);
});

describe('the server restarts', () => {
  it('keeps people signed in: the session lives in PostgreSQL, not in the process', async () => {
    const builder = await signIn(t, 'demo-builder');
    await builder.get('/api/me').expect(200);
    const jar = (builder as unknown as { jar: { getCookies(info: unknown): { name: string; value: string }[] } }).jar;
    const { CookieAccessInfo } = (await import('cookiejar')) as unknown as { CookieAccessInfo: { All: unknown } };
    const sid = jar.getCookies(CookieAccessInfo.All).find((c) => c.name === 'benchproof.sid');
    expect(sid).toBeDefined();

    // A new process in effect: a new app on the same database (the old one closed).
    const url = t.config.databaseUrl;
    await t.close();
    t = await startTestApp({ DATABASE_URL: url }, { ownDatabase: true });
    const me = await request(t.app).get('/api/me').set('Cookie', `benchproof.sid=${sid!.value}`);
    expect(me.status).toBe(200);
    expect(me.body.user.login).toBe('demo-builder');
  }, 60_000);
});
