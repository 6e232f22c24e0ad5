import { Router, type Request } from 'express';
import { TUS_RESUMABLE } from '@tus/server';
import { buildIdParamsSchema } from '@shared/builds/build.schema';
import { uploadParamsSchema } from '@shared/clips/clip.schema';
import type { Config } from '../../config';
import { access } from '../../http/authorize';
import { AppError } from '../../http/errors';
import { limiter } from '../../http/rate-limit';
import { validate } from '../../http/validate';
import { buildForOwner } from '../builds/builds.service';
import type { ResumableUploads } from './clip-uploads.service';

/** Every tus request names the protocol version; we speak 1.0.0 only. */
function requireTusVersion(req: Request) {
  if (req.get('tus-resumable') !== TUS_RESUMABLE) {
    throw new AppError(412, 'tus_version', `Send the header Tus-Resumable: ${TUS_RESUMABLE} with every upload request.`);
  }
}

/**
 * Routes under /api/builds/:buildId/uploads: resumable uploads (tus 1.0.0). Only the build's
 * builder creates, continues, asks about or cancels one; the rest of the API's answers hold
 * (401 signed out, 403 another role, 404 another builder's build). POST needs the CSRF header
 * like every write; so do PATCH and DELETE.
 */
export function clipUploadsRouter(uploads: ResumableUploads, config: Config) {
  const router = Router({ mergeParams: true });
  // tus: every answer names the protocol version, refusals included.
  router.use((_req, res, next) => {
    res.set('Tus-Resumable', TUS_RESUMABLE);
    next();
  });
  const uploadId = (req: Request) => String(req.params.uploadId);
  const buildId = (req: Request) => Number(req.params.buildId);
  // Starting an upload counts like a one-shot upload; continuing one is cheaper, and a shaky
  // connection asks (HEAD) and continues (PATCH) many times for one file.
  const starts = limiter({ windowMs: 60_000, limit: config.uploads.ratePerMinute, message: 'Too many uploads from here. Wait a minute and try again.' });
  const continues = limiter({ windowMs: 60_000, limit: config.uploads.ratePerMinute * 20, message: 'Too many upload requests from here. Wait a minute; the upload carries on from where it stopped.' });

  router.post('/', access.role('builder'), starts, validate({ params: buildIdParamsSchema }), async (req, res, next) => {
    const build = await buildForOwner(buildId(req), req.user);
    requireTusVersion(req);
    const creation = await uploads.admit(req, build.id, req.user!);
    await uploads.create(req, res, next, creation);
  });

  router.head('/:uploadId', access.role('builder'), continues, validate({ params: uploadParamsSchema }), async (req, res, next) => {
    const row = await uploads.uploadFor(buildId(req), uploadId(req), req.user);
    requireTusVersion(req);
    await uploads.head(row, req, res, next);
  });

  router.patch('/:uploadId', access.role('builder'), continues, validate({ params: uploadParamsSchema }), async (req, res, next) => {
    const row = await uploads.uploadFor(buildId(req), uploadId(req), req.user);
    requireTusVersion(req);
    await uploads.patch(row, req, res, next);
  });

  router.delete('/:uploadId', access.role('builder'), continues, validate({ params: uploadParamsSchema }), async (req, res, next) => {
    const row = await uploads.uploadFor(buildId(req), uploadId(req), req.user);
    requireTusVersion(req);
    await uploads.terminate(row, req, res, next);
  });

  return router;
}
