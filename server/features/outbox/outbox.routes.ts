import { Router } from 'express';
import { outboxResponseSchema } from '@shared/mail/outbox.schema';
import type { Config } from '../../config';
import { access } from '../../http/authorize';
import { AppError } from '../../http/errors';

/**
 * The admin outbox, mounted at /api/admin/outbox: what the local mail capture server received.
 * With real SMTP configured there is nothing captured to show (`capturing: false`).
 */
export function outboxRouter(config: Pick<Config, 'mail'>) {
  const router = Router();
  router.get('/', access.role('admin'), async (_req, res) => {
    if (!config.mail.captureApiUrl) {
      res.json({ capturing: false, items: [] });
      return;
    }
    let body: unknown;
    try {
      const r = await fetch(`${config.mail.captureApiUrl}/messages`, { signal: AbortSignal.timeout(3000) });
      body = await r.json();
    } catch {
      throw new AppError(503, 'mail_capture_unavailable', 'The local mail capture server is not answering. Is `npm start` still running?');
    }
    const parsed = outboxResponseSchema.pick({ items: true }).parse(body);
    res.set('Cache-Control', 'no-store');
    res.json({ capturing: true, items: parsed.items });
  });
  return router;
}
