import { Router } from 'express';
import type { Sequelize } from 'sequelize';
import { access } from '../../http/authorize';
import { AppError } from '../../http/errors';
import type { Config } from '../../config';
import { mediaBinaries } from '../clips/media/binaries';
import { displayReaderStatus } from '../speech/display-reader';
import { recognizerStatus } from '../speech/recognizer';

/**
 * GET /api/health: 200 when the database answers within two seconds, 503 otherwise. An admin
 * also sees which ffmpeg decodes uploads (its version line and whether it is the system's
 * package or the npm build) and whether a speech recognizer is there to listen to clips (and if
 * not, why); everyone else gets only the status, since a version tells an attacker which
 * published flaws to try.
 */
export function healthRouter(sequelize: Sequelize, speech?: Config['speech']) {
  const router = Router();
  router.get('/', access.public, async (req, res) => {
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
    const body = { status: 'ok', database: 'reachable', latencyMs: Date.now() - started };
    if (req.user?.role !== 'admin') return res.json(body);
    const { source, version } = mediaBinaries();
    res.json({ ...body, media: { ffmpeg: { source, version }, ...(speech && { recognizer: recognizerStatus(speech) }), displayReader: displayReaderStatus() } });
  });
  return router;
}
