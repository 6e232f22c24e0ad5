import { Router } from 'express';
import type { Sequelize } from 'sequelize';
import { access } from '../../http/authorize';
import { AppError } from '../../http/errors';

/** GET /api/health: 200 when the database answers within two seconds, 503 otherwise. */
export function healthRouter(sequelize: Sequelize) {
  const router = Router();
  router.get('/', access.public, async (_req, res) => {
    const started = Date.now();
    try {
      await Promise.race([
        sequelize.query('SELECT 1'),
        new Promise((_, reject) => setTimeout(() => reject(new Error('timeout')), 2000).unref()),
      ]);
    } catch {
      throw new AppError(503, 'database_unreachable', 'The database is not answering. Benchproof cannot serve data right now.');
    }
    res.set('Cache-Control', 'no-store');
    res.json({ status: 'ok', database: 'reachable', latencyMs: Date.now() - started });
  });
  return router;
}
