import { Router } from 'express';
import {
  buildIdParamsSchema,
  buildInputSchema,
  buildPatchSchema,
  listBuildsQuerySchema,
  type BuildPatch,
} from '@shared/builds/build.schema';
import { access } from '../../http/authorize';
import { validQuery, validate } from '../../http/validate';
import { buildForOwner, buildForViewer, createBuild, getBuild, listOwnBuilds, updateBuild } from './builds.service';

/** Builds, mounted at /api/builds. Builders make and edit their own; moderators may look. */
export const buildsRouter = Router();

buildsRouter.get('/', access.role('builder'), validate({ query: listBuildsQuerySchema }), async (req, res) => {
  res.json(await listOwnBuilds(req.user!, validQuery(res)));
});

buildsRouter.post('/', access.role('builder'), validate({ body: buildInputSchema }), async (req, res) => {
  res.status(201).json({ build: await createBuild(req.user!, req.body) });
});

buildsRouter.get('/:buildId', access.signedIn, validate({ params: buildIdParamsSchema }), async (req, res) => {
  const build = await buildForViewer(Number(req.params.buildId), req.user);
  res.json({ build: await getBuild(build) });
});

buildsRouter.patch(
  '/:buildId',
  access.role('builder'),
  validate({ params: buildIdParamsSchema, body: buildPatchSchema }),
  async (req, res) => {
    const build = await buildForOwner(Number(req.params.buildId), req.user);
    res.json({ build: await updateBuild(build, req.body as BuildPatch) });
  },
);
