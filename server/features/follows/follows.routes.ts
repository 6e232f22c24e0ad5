import { Router } from 'express';
import {
  builderIdParamsSchema,
  followListQuerySchema,
  followPatchSchema,
  preferencesPatchSchema,
  type FollowPatch,
  type PreferencesPatch,
} from '@shared/public/follows.schema';
import { access } from '../../http/authorize';
import { validQuery, validate } from '../../http/validate';
import { follow, myFollows, preferencesOf, setEmailOnPublish, unfollow, updatePreferences } from './follows.service';

/** Under /api/builders: follow and unfollow a builder. */
export function followsRouter() {
  const router = Router();
  const params = validate({ params: builderIdParamsSchema });
  router.post('/:builderId/follow', access.signedIn, params, async (req, res) => {
    const { follow: dto, created } = await follow(req.user!, Number(req.params.builderId));
    res.status(created ? 201 : 200).json({ follow: dto });
  });
  router.delete('/:builderId/follow', access.signedIn, params, async (req, res) => {
    await unfollow(req.user!, Number(req.params.builderId));
    res.status(204).end();
  });
  return router;
}

/** Under /api/me: the builders I follow, their mail, and my preferences. */
export function meFollowsRouter() {
  const router = Router();
  router.get('/follows', access.signedIn, validate({ query: followListQuerySchema }), async (req, res) => {
    res.set('Cache-Control', 'no-store');
    res.json(await myFollows(req.user!, validQuery<{ after?: number; limit: number }>(res)));
  });
  router.patch('/follows/:builderId', access.signedIn, validate({ params: builderIdParamsSchema, body: followPatchSchema }), async (req, res) => {
    res.json({ follow: await setEmailOnPublish(req.user!, Number(req.params.builderId), (req.body as FollowPatch).emailOnPublish) });
  });
  router.get('/preferences', access.signedIn, async (req, res) => {
    res.set('Cache-Control', 'no-store');
    res.json({ preferences: await preferencesOf(req.user!) });
  });
  router.patch('/preferences', access.signedIn, validate({ body: preferencesPatchSchema }), async (req, res) => {
    res.json({ preferences: await updatePreferences(req.user!, req.body as PreferencesPatch) });
  });
  return router;
}
