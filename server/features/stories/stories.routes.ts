import { Router } from 'express';
import { buildIdParamsSchema } from '@shared/builds/build.schema';
import {
  storyIdParamsSchema,
  storyInputSchema,
  storyListQuerySchema,
  storyPatchSchema,
  storyRevisionListQuerySchema,
  storyRevisionParamsSchema,
  type StoryPatch,
} from '@shared/stories/story.schema';
import { access } from '../../http/authorize';
import { validQuery, validate } from '../../http/validate';
import type { Storage } from '../../storage/storage';
import { buildForOwner, buildForViewer } from '../builds/builds.service';
import {
  createStory,
  deleteStory,
  getRevision,
  getStory,
  keepRevision,
  listRevisions,
  listStories,
  patchStory,
  storyClaims,
  storyForOwner,
  storyForViewer,
} from './stories.service';

/** Routes under /api/builds/:buildId/stories: a build's diary entries. */
export function buildStoriesRouter() {
  const router = Router({ mergeParams: true });

  router.get('/', access.signedIn, validate({ params: buildIdParamsSchema, query: storyListQuerySchema }), async (req, res) => {
    const build = await buildForViewer(Number(req.params.buildId), req.user);
    res.json(await listStories(build, validQuery<{ before?: number; limit: number }>(res)));
  });

  router.post('/', access.role('builder'), validate({ params: buildIdParamsSchema, body: storyInputSchema }), async (req, res) => {
    const build = await buildForOwner(Number(req.params.buildId), req.user);
    res.status(201).json({ story: await createStory(build, req.user!, req.body) });
  });

  return router;
}

export interface StoryRouteDeps {
  storage: Storage;
  /** How old the newest revision must be before a saved change writes another (default 5 minutes). */
  autosaveEveryMs?: number;
}

/** Routes under /api/stories/:storyId: one story, its revisions and its claims. */
export function storiesRouter(deps: StoryRouteDeps) {
  const router = Router();
  const one = validate({ params: storyIdParamsSchema });
  const storyId = (req: { params: Record<string, unknown> }) => Number(req.params.storyId);

  router.get('/:storyId', access.signedIn, one, async (req, res) => {
    const { story, build } = await storyForViewer(storyId(req), req.user);
    res.json({ story: await getStory(story, build) });
  });

  router.patch('/:storyId', access.role('builder'), validate({ params: storyIdParamsSchema, body: storyPatchSchema }), async (req, res) => {
    const { story, build } = await storyForOwner(storyId(req), req.user);
    res.json({ story: await patchStory(story, build, req.user!, req.body as StoryPatch, { autosaveEveryMs: deps.autosaveEveryMs }) });
  });

  router.delete('/:storyId', access.role('builder'), one, async (req, res) => {
    const { story } = await storyForOwner(storyId(req), req.user);
    await deleteStory(deps.storage, story);
    res.status(204).end();
  });

  router.get('/:storyId/revisions', access.signedIn, validate({ params: storyIdParamsSchema, query: storyRevisionListQuerySchema }), async (req, res) => {
    const { story } = await storyForViewer(storyId(req), req.user);
    res.json(await listRevisions(story, validQuery<{ before?: number; limit: number }>(res)));
  });

  router.post('/:storyId/revisions', access.role('builder'), one, async (req, res) => {
    const { story } = await storyForOwner(storyId(req), req.user);
    res.status(201).json({ revision: await keepRevision(story, req.user!) });
  });

  router.get('/:storyId/revisions/:number', access.signedIn, validate({ params: storyRevisionParamsSchema }), async (req, res) => {
    const { story } = await storyForViewer(storyId(req), req.user);
    res.json({ revision: await getRevision(story, Number(req.params.number)) });
  });

  router.get('/:storyId/claims', access.signedIn, one, async (req, res) => {
    const { story } = await storyForViewer(storyId(req), req.user);
    res.json(await storyClaims(story));
  });

  return router;
}
