import crypto from 'node:crypto';
import fsp from 'node:fs/promises';
import path from 'node:path';
import { Router, type RequestHandler } from 'express';
import multer from 'multer';
import { buildIdParamsSchema } from '@shared/builds/build.schema';
import {
  clipIdParamsSchema,
  clipOrderSchema,
  clipPatchSchema,
  clipUploadField,
  frameQuerySchema,
  momentIdParamsSchema,
  momentInputSchema,
  momentPatchSchema,
  type ClipPatch,
} from '@shared/clips/clip.schema';
import type { Config } from '../../config';
import { access } from '../../http/authorize';
import { badRequest, conflict } from '../../http/errors';
import { multipartFailure, refuseNulInUpload } from '../../http/multipart';
import { limiter } from '../../http/rate-limit';
import { validQuery, validate } from '../../http/validate';
import type { Queue } from '../../jobs/queue';
import type { Storage } from '../../storage/storage';
import { buildForOwner, buildForViewer } from '../builds/builds.service';
import { readingDisplaysForMoments } from '../readings/readings.service';
import { enqueueClip } from './clip.job';
import { evidenceStillKey, evidenceStillLimiter } from './evidence-stills';
import {
  acceptUpload,
  addMoment,
  clipForOwner,
  clipForViewer,
  clipKeys,
  deleteClip,
  deleteMoment,
  listClips,
  listMoments,
  momentForOwner,
  momentsForChapters,
  patchClip,
  patchMoment,
  playableContentType,
  playableKey,
  reorderClips,
  toClipDto,
  tooLargeError,
} from './clips.service';
import { chaptersVtt, cuesFromMoments, momentCueText } from './media/vtt';

export interface ClipRouteDeps {
  config: Config;
  storage: Storage;
  queue: Queue | null;
}

/** Draft media is private to the builder and reviewers: never stored by shared caches. */
const privateCache = (seconds: number) => `private, max-age=${seconds}`;

/** Routes under /api/builds/:buildId/clips: list, upload, order. */
export function buildClipsRouter(deps: ClipRouteDeps) {
  const router = Router({ mergeParams: true });
  const incoming = path.join(deps.storage.scratchDir(), 'incoming');
  const upload = multer({
    storage: multer.diskStorage({
      destination: (_req, _file, cb) =>
        fsp.mkdir(incoming, { recursive: true }).then(
          () => cb(null, incoming),
          (err: Error) => cb(err, incoming),
        ),
      // Our own name: nothing of the uploader's file name reaches the disk.
      filename: (_req, _file, cb) => cb(null, `${crypto.randomUUID()}.upload`),
    }),
    limits: { fileSize: deps.config.uploads.maxBytes, files: 1, fields: 4, fieldSize: 2000, parts: 6 },
  }).single(clipUploadField);

  const receive: RequestHandler = (req, res, next) => {
    const declared = Number(req.headers['content-length'] ?? 0);
    if (declared > deps.config.uploads.maxBytes + 64 * 1024) return next(tooLargeError(deps.config.uploads.maxBytes));
    upload(req, res, (err: unknown) => {
      if (!err) {
        refuseNulInUpload(req, clipUploadField).then((refused) => next(refused ?? undefined), next);
        return;
      }
      if (err instanceof multer.MulterError && err.code === 'LIMIT_FILE_SIZE') return next(tooLargeError(deps.config.uploads.maxBytes));
      next(multipartFailure(err, `Send one video in the field "${clipUploadField}".`, clipUploadField));
    });
  };

  router.get('/', access.signedIn, validate({ params: buildIdParamsSchema }), async (req, res) => {
    const build = await buildForViewer(Number(req.params.buildId), req.user);
    res.json({ items: await listClips(build.id) });
  });

  router.post(
    '/',
    access.role('builder'),
    limiter({ windowMs: 60_000, limit: deps.config.uploads.ratePerMinute, message: 'Too many uploads from here. Wait a minute and try again.' }),
    validate({ params: buildIdParamsSchema }),
    async (req, _res, next) => {
      // Checked before a byte is written: only the build's builder may upload to it.
      await buildForOwner(Number(req.params.buildId), req.user);
      next();
    },
    receive,
    async (req, res) => {
      if (!req.file) throw badRequest(`No file arrived. Send the video in the form field "${clipUploadField}".`, [{ path: clipUploadField, message: 'missing' }]);
      const title = typeof req.body?.title === 'string' ? req.body.title : undefined;
      const clip = await acceptUpload(
        { storage: deps.storage, maxSeconds: deps.config.uploads.maxSeconds, clipsPerBuild: deps.config.uploads.clipsPerBuild },
        Number(req.params.buildId),
        req.file,
        title,
      );
      if (deps.queue) await enqueueClip(deps.queue, clip.id);
      res.status(201).json({ clip: await toClipDto(clip, 0) });
    },
  );

  router.put('/order', access.role('builder'), validate({ params: buildIdParamsSchema, body: clipOrderSchema }), async (req, res) => {
    const build = await buildForOwner(Number(req.params.buildId), req.user);
    res.json({ items: await reorderClips(build.id, (req.body as { clipIds: number[] }).clipIds) });
  });

  return router;
}

/** Routes under /api/clips/:clipId: one clip, its media, its moments. */
export function clipsRouter(deps: ClipRouteDeps) {
  const router = Router();
  const one = validate({ params: clipIdParamsSchema });
  const clipId = (req: { params: Record<string, unknown> }) => Number(req.params.clipId);

  router.get('/:clipId', access.signedIn, one, async (req, res) => {
    res.json({ clip: await toClipDto(await clipForViewer(clipId(req), req.user)) });
  });

  router.patch('/:clipId', access.role('builder'), validate({ params: clipIdParamsSchema, body: clipPatchSchema }), async (req, res) => {
    const clip = await clipForOwner(clipId(req), req.user);
    res.json({ clip: await patchClip(clip, req.body as ClipPatch) });
  });

  router.delete('/:clipId', access.role('builder'), one, async (req, res) => {
    await deleteClip(deps.storage, await clipForOwner(clipId(req), req.user, 'take-down'));
    res.status(204).end();
  });

  const readyClip = async (req: Parameters<RequestHandler>[0]) => {
    const clip = await clipForViewer(clipId(req), req.user);
    if (clip.status !== 'ready') throw conflict('This clip is not ready yet; its media appears when processing has finished.', 'clip_not_ready');
    return clip;
  };

  router.get('/:clipId/video', access.signedIn, one, async (req, res) => {
    const clip = await readyClip(req);
    res.set('Cache-Control', privateCache(0));
    await deps.storage.send(res, playableKey(clip), { contentType: playableContentType(clip) });
  });
  router.get('/:clipId/poster', access.signedIn, one, async (req, res) => {
    const clip = await readyClip(req);
    res.set('Cache-Control', privateCache(3600));
    await deps.storage.send(res, clipKeys(clip).poster, { contentType: 'image/jpeg' });
  });
  router.get('/:clipId/thumbnails', access.signedIn, one, async (req, res) => {
    const clip = await readyClip(req);
    res.set('Cache-Control', privateCache(3600));
    await deps.storage.send(res, clipKeys(clip).thumbnails, { contentType: 'image/jpeg' });
  });

  const frameLimiter = evidenceStillLimiter();
  router.get('/:clipId/frame', access.signedIn, frameLimiter, validate({ params: clipIdParamsSchema, query: frameQuerySchema }), async (req, res) => {
    const clip = await readyClip(req);
    const key = await evidenceStillKey(deps.storage, clip, Math.round(validQuery<{ t: number }>(res).t * 1000), deps.config.stillsPerClip);
    res.set('Cache-Control', privateCache(86_400));
    await deps.storage.send(res, key, { contentType: 'image/jpeg' });
  });

  router.get('/:clipId/chapters.vtt', access.signedIn, one, async (req, res) => {
    const clip = await clipForViewer(clipId(req), req.user);
    const moments = await momentsForChapters(clip.id);
    const readings = await readingDisplaysForMoments(moments.map((m) => m.id));
    const durationMs = clip.probe ? Math.round(clip.probe.durationS * 1000) : 0;
    const cues = cuesFromMoments(moments.map((m) => ({ atMs: m.atMs, label: momentCueText(m.label || 'Moment', readings.get(m.id)) })), durationMs);
    res.set('Cache-Control', 'no-cache');
    res.type('text/vtt; charset=utf-8').send(chaptersVtt(cues));
  });

  router.get('/:clipId/moments', access.signedIn, one, async (req, res) => {
    res.json({ items: await listMoments(await clipForViewer(clipId(req), req.user)) });
  });
  router.post('/:clipId/moments', access.role('builder'), validate({ params: clipIdParamsSchema, body: momentInputSchema }), async (req, res) => {
    const clip = await clipForOwner(clipId(req), req.user);
    res.status(201).json({ moment: await addMoment(clip, req.user!, req.body) });
  });

  return router;
}

/** Routes under /api/moments/:momentId. */
export function momentsRouter() {
  const router = Router();
  router.patch('/:momentId', access.role('builder'), validate({ params: momentIdParamsSchema, body: momentPatchSchema }), async (req, res) => {
    const { moment, clip } = await momentForOwner(Number(req.params.momentId), req.user);
    res.json({ moment: await patchMoment(clip, moment, req.body) });
  });
  router.delete('/:momentId', access.role('builder'), validate({ params: momentIdParamsSchema }), async (req, res) => {
    const { moment } = await momentForOwner(Number(req.params.momentId), req.user, 'take-down');
    await deleteMoment(moment);
    res.status(204).end();
  });
  return router;
}
