import { Router } from 'express';
import { z } from 'zod';
import { buildIdParamsSchema } from '@shared/builds/build.schema';
import { storyIdParamsSchema } from '@shared/stories/story.schema';
import { answerInputSchema, auditQuerySchema, checkInputSchema, queueQuerySchema, transitionInputSchema, type TransitionInput } from '@shared/review/review.schema';
import { access } from '../../http/authorize';
import { validQuery, validate } from '../../http/validate';
import { listAudit } from '../audit/audit.service';
import { buildForViewer } from '../builds/builds.service';
import { answerCheck, claimStory, recordCheck, releaseClaim, reviewQueue, reviewSheet, standingFlagsOfBuild, storyForReview, transition, type ReviewDeps } from './review.service';

const checkIdParams = z.object({ checkId: z.coerce.number().int().positive() });

/** Workflow moves on one story, mounted at /api/stories (beside the story routes). */
export function storyTransitionsRouter(deps: ReviewDeps) {
  const router = Router();
  router.post('/:storyId/transitions', access.signedIn, validate({ params: storyIdParamsSchema, body: transitionInputSchema }), async (req, res) => {
    res.json(await transition(Number(req.params.storyId), req.user!, req.body as TransitionInput, deps));
  });
  // The story's audit trail: moderators and admins.
  router.get('/:storyId/audit', access.role('moderator'), validate({ params: storyIdParamsSchema, query: auditQuerySchema }), async (req, res) => {
    await storyForReview(Number(req.params.storyId), req.user);
    res.json(await listAudit({ ...validQuery<z.infer<typeof auditQuerySchema>>(res), storyId: Number(req.params.storyId) }));
  });
  return router;
}

/** The moderators' side, mounted at /api/review. */
export function reviewRouter(deps: ReviewDeps) {
  const router = Router();
  const now = () => deps.now?.() ?? new Date();
  router.get('/queue', access.role('moderator'), validate({ query: queueQuerySchema }), async (_req, res) => {
    res.json(await reviewQueue(validQuery(res), now()));
  });
  // The builder reads it too (to see the flags to answer); blockers are computed for moderators only.
  router.get('/stories/:storyId', access.signedIn, validate({ params: storyIdParamsSchema }), async (req, res) => {
    res.json(await reviewSheet(Number(req.params.storyId), req.user!, deps));
  });
  router.post('/stories/:storyId/claim', access.role('moderator'), validate({ params: storyIdParamsSchema }), async (req, res) => {
    res.json({ claim: await claimStory(Number(req.params.storyId), req.user!, deps) });
  });
  router.delete('/stories/:storyId/claim', access.role('moderator'), validate({ params: storyIdParamsSchema }), async (req, res) => {
    await releaseClaim(Number(req.params.storyId), req.user!);
    res.status(204).end();
  });
  router.post('/checks', access.role('moderator'), validate({ body: checkInputSchema }), async (req, res) => {
    res.status(201).json({ check: await recordCheck(req.user!, req.body as z.output<typeof checkInputSchema>, deps) });
  });
  router.post('/checks/:checkId/answers', access.role('builder'), validate({ params: checkIdParams, body: answerInputSchema }), async (req, res) => {
    res.status(201).json({ check: await answerCheck(req.user!, Number(req.params.checkId), (req.body as { body: string }).body) });
  });
  // The flags standing on a build's readings and clearances: whoever may see the build.
  router.get('/builds/:buildId/flags', access.signedIn, validate({ params: buildIdParamsSchema }), async (req, res) => {
    const build = await buildForViewer(Number(req.params.buildId), req.user);
    res.json({ items: await standingFlagsOfBuild(build.id) });
  });
  router.get('/audit', access.role('moderator'), validate({ query: auditQuerySchema }), async (_req, res) => {
    res.json(await listAudit(validQuery(res)));
  });
  return router;
}
