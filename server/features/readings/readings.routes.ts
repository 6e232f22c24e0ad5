import express, { Router } from 'express';
import type { z } from 'zod';
import { buildIdParamsSchema } from '@shared/builds/build.schema';
import { readingImportRequestSchema } from '@shared/readings/reading-import.schema';
import {
  readingIdParamsSchema,
  readingInputSchema,
  readingListQuerySchema,
  readingPatchSchema,
  type ReadingPatch,
} from '@shared/readings/reading.schema';
import { access } from '../../http/authorize';
import { validQuery, validate } from '../../http/validate';
import { buildForOwner, buildForViewer } from '../builds/builds.service';
import { readingsCsv } from './readings.csv';
import { importReadings } from './readings.import';
import {
  createReading,
  deleteReading,
  getReading,
  listReadings,
  patchReading,
  readingDtosForBuild,
  readingForOwner,
  readingForViewer,
  readingHistory,
} from './readings.service';

/**
 * The readings import, whose body carries a CSV file of up to 5 MB: the app's JSON parser (256 kB)
 * leaves it alone and the route parses it after its access check. JSON escaping and UTF-8 make the
 * body larger than the file, hence 8 MB here.
 */
const IMPORT_PATH = /^\/api\/builds\/[^/?#]+\/readings\/import\/?(?:[?#]|$)/;
const importBody = express.json({ limit: '8mb' });

/** True for the one route that parses its own, larger JSON body. */
export function readsOwnJsonBody(url: string): boolean {
  return IMPORT_PATH.test(url);
}

const buildId = (req: { params: Record<string, unknown> }) => Number(req.params.buildId);
const readingId = (req: { params: Record<string, unknown> }) => Number(req.params.readingId);

/** Routes under /api/builds/:buildId: the build's readings and their export. */
export function buildReadingsRouter() {
  const router = Router({ mergeParams: true });

  router.get('/readings', access.signedIn, validate({ params: buildIdParamsSchema, query: readingListQuerySchema }), async (req, res) => {
    const build = await buildForViewer(buildId(req), req.user);
    res.json(await listReadings(build.id, validQuery<z.output<typeof readingListQuerySchema>>(res)));
  });

  router.post('/readings', access.role('builder'), validate({ params: buildIdParamsSchema, body: readingInputSchema }), async (req, res) => {
    const build = await buildForOwner(buildId(req), req.user);
    res.status(201).json({ reading: await createReading(build, req.user!, req.body as z.output<typeof readingInputSchema>) });
  });

  router.post(
    '/readings/import',
    access.role('builder'),
    importBody,
    validate({ params: buildIdParamsSchema, body: readingImportRequestSchema }),
    async (req, res) => {
      const build = await buildForOwner(buildId(req), req.user);
      const { status, body } = await importReadings(build, req.user!, req.body as z.output<typeof readingImportRequestSchema>);
      res.status(status).json(body);
    },
  );

  router.get('/readings.csv', access.signedIn, validate({ params: buildIdParamsSchema }), async (req, res) => {
    const build = await buildForViewer(buildId(req), req.user);
    const csv = readingsCsv(await readingDtosForBuild(build.id));
    res.set('Cache-Control', 'private, no-cache');
    res.set('Content-Disposition', `attachment; filename="build-${build.id}-readings.csv"`);
    res.type('text/csv; charset=utf-8').send(csv);
  });

  return router;
}

/** Routes under /api/readings/:readingId: one reading, its edits and its history. */
export function readingsRouter() {
  const router = Router();
  const one = validate({ params: readingIdParamsSchema });

  router.get('/:readingId', access.signedIn, one, async (req, res) => {
    const { reading } = await readingForViewer(readingId(req), req.user);
    res.json({ reading: await getReading(reading) });
  });

  router.patch('/:readingId', access.role('builder'), validate({ params: readingIdParamsSchema, body: readingPatchSchema }), async (req, res) => {
    const { reading, build } = await readingForOwner(readingId(req), req.user);
    res.json({ reading: await patchReading(reading, build, req.user!, req.body as ReadingPatch) });
  });

  router.delete('/:readingId', access.role('builder'), one, async (req, res) => {
    const { reading } = await readingForOwner(readingId(req), req.user, 'take-down');
    await deleteReading(reading);
    res.status(204).end();
  });

  router.get('/:readingId/history', access.signedIn, one, async (req, res) => {
    const { reading } = await readingForViewer(readingId(req), req.user);
    res.json(await readingHistory(reading));
  });

  return router;
}
