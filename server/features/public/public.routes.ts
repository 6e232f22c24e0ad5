import { Router } from 'express';
import { publicBuilderParamsSchema, publicBuildParamsSchema } from '@shared/public/public-build.schema';
import { publicFrameQuerySchema, publicMediaQuerySchema } from '@shared/public/public-media.schema';
import {
  publicClipParamsSchema,
  publicStoryListQuerySchema,
  publicStoryParamsSchema,
  publicStoryQuerySchema,
} from '@shared/public/public-story.schema';
import { access } from '../../http/authorize';
import { notFound } from '../../http/errors';
import { input } from '../../http/validate';
import type { Storage } from '../../storage/storage';
import { clipKeys, playableContentType, playableKey } from '../clips/clips.service';
import { evidenceStillKey, evidenceStillLimiter } from '../clips/evidence-stills';
import { mediaCacheControl, mediaVersion } from './media-versions';
import {
  cachedPublicStoryBody,
  currentPublicPage,
  listPublicStories,
  publicBuild,
  publicBuilderProfile,
  publicClipScope,
  storyEtag,
} from './public.service';

/** Published pages change only with a new publication: shared caches may keep them a minute. */
const PUBLIC_PAGE_CACHE = 'public, max-age=60, stale-while-revalidate=300';
/**
 * Public lists and build pages: a browser asks again after 30 s, a shared cache (a CDN in front)
 * keeps them a minute and may serve a stale copy for five more while it fetches the new one. The
 * body's ETag (Express's, on every JSON answer) turns a repeat into a 304.
 */
const PUBLIC_LIST_CACHE = 'public, max-age=30, s-maxage=60, stale-while-revalidate=300';

/**
 * The public side under /api/public: published stories, builds, builders and the media their
 * evidence cites. Everything is read from publications; drafts stay private.
 */
export function publicRouter(deps: { storage: Storage; stillsPerClip: number }) {
  const router = Router();

  router.get('/stories', access.public, ...input({ query: publicStoryListQuerySchema }, async ({ query }, _req, res) => {
    res.set('Cache-Control', PUBLIC_LIST_CACHE);
    res.json(await listPublicStories(query));
  }));

  router.get('/stories/following', access.signedIn, ...input({ query: publicStoryListQuerySchema }, async ({ query }, req, res) => {
    res.set('Cache-Control', 'private, no-cache');
    res.json(await listPublicStories(query, { followerId: req.user!.id }));
  }));

  router.get('/stories/:storyId', access.public, ...input({ params: publicStoryParamsSchema, query: publicStoryQuerySchema }, async ({ params, query }, req, res) => {
    const page = await currentPublicPage(params.storyId);
    if (page === null) throw notFound('There is no published story with that id.');
    const units = query.units ?? null;
    // A 40-claim page is ~150 KB of JSON and ~8 KB gzipped; the gzip is made once per
    // revision and kept, so compressing costs no request its CPU.
    const coding = req.acceptsEncodings('gzip') === 'gzip' ? 'gzip' : 'identity';
    res.vary('Accept-Encoding');
    res.set('ETag', storyEtag(page, units, coding));
    res.set('Cache-Control', PUBLIC_PAGE_CACHE);
    // Answered before anything is built: the tag names the publication and the page's version.
    if (req.fresh) {
      res.status(304).end();
      return;
    }
    if (coding === 'gzip') res.set('Content-Encoding', 'gzip');
    res.type('application/json').send(await cachedPublicStoryBody(page, units, coding));
  }));

  router.get('/builds/:buildId', access.public, ...input({ params: publicBuildParamsSchema }, async ({ params }, _req, res) => {
    res.set('Cache-Control', PUBLIC_LIST_CACHE);
    res.json(await publicBuild(params.buildId));
  }));

  router.get('/builders/:login', access.public, ...input({ params: publicBuilderParamsSchema }, async ({ params }, req, res) => {
    // Whether the caller follows is personal.
    res.set('Cache-Control', 'private, no-cache');
    res.json(await publicBuilderProfile(params.login, req.user));
  }));

  const fullClip = async (id: number) => {
    const scope = await publicClipScope(id);
    if (!scope.full) throw notFound('There is no public clip with that id.');
    return scope.clip;
  };

  const media = { params: publicClipParamsSchema, query: publicMediaQuerySchema };
  router.get('/clips/:clipId/video', access.public, ...input(media, async ({ params, query }, _req, res) => {
    const clip = await fullClip(params.clipId);
    res.set('Cache-Control', mediaCacheControl(query.v, mediaVersion(clip), 'public, max-age=60'));
    await deps.storage.send(res, playableKey(clip), { contentType: playableContentType(clip) });
  }));

  router.get('/clips/:clipId/poster', access.public, ...input(media, async ({ params, query }, _req, res) => {
    const clip = await fullClip(params.clipId);
    res.set('Cache-Control', mediaCacheControl(query.v, mediaVersion(clip), 'public, max-age=300'));
    await deps.storage.send(res, clipKeys(clip).poster, { contentType: 'image/jpeg' });
  }));

  const frameLimiter = evidenceStillLimiter();
  router.get('/clips/:clipId/frame', access.public, frameLimiter, ...input({ params: publicClipParamsSchema, query: publicFrameQuerySchema }, async ({ params, query }, _req, res) => {
    const scope = await publicClipScope(params.clipId);
    const atMs = Math.round(query.t * 1000);
    const version = mediaVersion(scope.clip);
    // Only the moments a current publication cites (its readings' and its cover); nothing is cut for any other time.
    if (!scope.stillTimesMs.has(atMs)) throw notFound('There is no public still at that time: stills are shown at the moments a published story cites.');
    const key = await evidenceStillKey(deps.storage, scope.clip, atMs, deps.stillsPerClip);
    res.set('Cache-Control', mediaCacheControl(query.v, version, 'public, max-age=300'));
    await deps.storage.send(res, key, { contentType: 'image/jpeg' });
  }));

  return router;
}
