import express, { Router } from 'express';
import { unsubscribeQuerySchema } from '@shared/mail/outbox.schema';
import type { Config } from '../../config';
import { access } from '../../http/authorize';
import { AppError } from '../../http/errors';
import { limiter } from '../../http/rate-limit';
import { validQuery, validate } from '../../http/validate';
import { audit } from '../audit/audit.service';
import { User } from '../users/user.model';
import { Follow } from './follow.model';
import { verifyUnsubscribe } from './unsubscribe-token';

const invalid = () => new AppError(400, 'invalid_token', 'This unsubscribe link is not valid (it may have been cut short or changed). Manage your e-mail from your account instead.');

/**
 * One-click unsubscribe (RFC 8058), mounted at /api/unsubscribe. The signed token is the
 * authority, so no session or CSRF token is needed. GET only describes (mail scanners follow
 * links); POST — what a mail client's one-click button sends, with the body
 * `List-Unsubscribe=One-Click` — turns the mail off. Doing it twice is harmless.
 */
export function unsubscribeRouter(config: Pick<Config, 'sessionSecret'>) {
  const router = Router();
  const slow = limiter({ windowMs: 60_000, limit: 60 });
  const resolve = async (token: string) => {
    const ids = verifyUnsubscribe(config.sessionSecret, token);
    if (!ids) throw invalid();
    const [follower, builder] = await Promise.all([User.findByPk(ids.followerId), User.findByPk(ids.builderId)]);
    if (!follower || !builder) throw invalid();
    return { follower, builder, follow: await Follow.findOne({ where: { followerId: follower.id, builderId: builder.id } }) };
  };
  router.get('/', access.public, slow, validate({ query: unsubscribeQuerySchema }), async (_req, res) => {
    const { follower, builder, follow } = await resolve(validQuery<{ token: string }>(res).token);
    res.set('Cache-Control', 'no-store');
    res.json({ builderName: builder.displayName, followerName: follower.displayName, subscribed: Boolean(follow?.emailOnPublish) });
  });
  router.post('/', access.public, slow, express.urlencoded({ extended: false, limit: '1kb' }), validate({ query: unsubscribeQuerySchema }), async (_req, res) => {
    const { follower, builder, follow } = await resolve(validQuery<{ token: string }>(res).token);
    if (follow?.emailOnPublish) {
      await Follow.sequelize!.transaction(async (transaction) => {
        await follow.update({ emailOnPublish: false }, { transaction });
        await audit({ actorId: follower.id, action: 'follow.unsubscribe', subjectType: 'user', subjectId: builder.id, before: { emailOnPublish: true }, after: { emailOnPublish: false } }, transaction);
      });
    }
    res.set('Cache-Control', 'no-store');
    res.json({ builderName: builder.displayName, followerName: follower.displayName, subscribed: false });
  });
  return router;
}
