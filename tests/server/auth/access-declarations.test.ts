import { describe, expect, it } from 'vitest';
import express, { Router } from 'express';
import { access } from '../../../server/http/authorize';
import { listRoutes, mount } from '../../../server/http/routes';
import { startTestApp } from '../../support/test-app';

describe('deny by default', () => {
  it('mounting a router with a route that declares no access check refuses to start', () => {
    const router = Router();
    router.get('/open', (_req, res) => res.json({ ok: true }));
    expect(() => mount(express(), '/api/probe', router)).toThrow(/GET \/api\/probe\/open has no access declaration/);
  });

  it('a route that declares its access mounts and is listed', () => {
    const router = Router();
    router.post('/things', access.role('builder'), (_req, res) => res.json({ ok: true }));
    const app = express();
    mount(app, '/api/probe-ok', router);
    expect(listRoutes(app)).toEqual([{ method: 'POST', path: '/api/probe-ok/things' }]);
    // Another app lists only its own routes.
    expect(listRoutes(express())).toEqual([]);
  });

  it('every route of the real app is listed with a declared access check', async () => {
    const t = await startTestApp();
    try {
      const paths = listRoutes(t.app).map((r) => `${r.method} ${r.path}`);
      for (const expected of ['GET /auth/github', 'GET /auth/github/callback', 'POST /auth/sign-out', 'GET /api/me', 'GET /api/health', 'GET /api/admin/users', 'PATCH /api/admin/users/:id']) {
        expect(paths).toContain(expected);
      }
    } finally {
      await t.close();
    }
  });
});
