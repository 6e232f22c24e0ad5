import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import request from 'supertest';
import { errorBodySchema } from '@shared/http/error.schema';
import { mediaBinaries } from '../../../server/features/clips/media/binaries';
import { signIn, startTestApp, type TestApp } from '../../support/test-app';

let t: TestApp;
beforeAll(async () => {
  t = await startTestApp();
});
afterAll(() => t.close());

describe('GET /api/health', () => {
  it('answers 200 when the database is reachable', async () => {
    const res = await request(t.app).get('/api/health').expect(200);
    expect(res.body).toMatchObject({ status: 'ok', database: 'reachable' });
  });

  it('tells anyone but an admin only the status, never which ffmpeg runs', async () => {
    const anonymous = await request(t.app).get('/api/health').expect(200);
    expect(Object.keys(anonymous.body).sort()).toEqual(['database', 'latencyMs', 'status']);
    const builder = await (await signIn(t, 'demo-builder')).get('/api/health').expect(200);
    expect(Object.keys(builder.body).sort()).toEqual(['database', 'latencyMs', 'status']);
  });

  it("tells an admin which ffmpeg decodes uploads: its version line and whether it is the system's", async () => {
    const admin = await signIn(t, 'demo-admin');
    const res = await admin.get('/api/health').expect(200);
    const { source, version } = mediaBinaries();
    expect(res.body).toMatchObject({ status: 'ok', database: 'reachable', media: { ffmpeg: { source, version } } });
    expect(res.body.media.ffmpeg.version).toMatch(/^ffmpeg version \S+/);
    expect(['system', 'packaged']).toContain(res.body.media.ffmpeg.source);
    expect(res.headers['cache-control']).toBe('no-store');
  });

  it('answers 503 in the error contract when the database is not reachable', async () => {
    // Port 1 on loopback: nothing listens there, so every connection is refused.
    const broken = await startTestApp({ DATABASE_URL: 'postgres://benchproof@127.0.0.1:1/nothing' });
    try {
      const res = await request(broken.app).get('/api/health').expect(503);
      expect(errorBodySchema.parse(res.body).error.code).toBe('database_unreachable');
    } finally {
      await broken.close();
    }
  });
});

describe('the error contract', () => {
  it('an unknown API path answers 404 with code, message and details', async () => {
    const res = await request(t.app).get('/api/no-such-thing').expect(404);
    expect(errorBodySchema.parse(res.body)).toEqual({
      error: { code: 'not_found', message: expect.any(String), details: [] },
    });
  });

  it('a body that is not JSON answers 400 without a stack trace', async () => {
    const res = await request(t.app).post('/api/calc').set('Content-Type', 'application/json').send('{"readings":');
    expect(res.status).toBe(400);
    expect(errorBodySchema.parse(res.body).error.message).not.toMatch(/at .*\.ts:\d+/);
  });

  it('security headers are set, with a Content-Security-Policy that allows only our own scripts', async () => {
    const res = await request(t.app).get('/api/health');
    expect(res.headers['content-security-policy']).toMatch(/script-src 'self'/);
    expect(res.headers['content-security-policy']).toMatch(/frame-ancestors 'none'/);
    expect(res.headers['x-content-type-options']).toBe('nosniff');
    expect(res.headers['x-powered-by']).toBeUndefined();
  });
});
