import express, { Router } from 'express';
import { buildIdParamsSchema } from '@shared/builds/build.schema';
import { readingImportRequestSchema } from '@shared/readings/reading-import.schema';
import {
  readingIdParamsSchema,
  readingInputSchema,
  readingListQuerySchema,
  readingPatchSchema,
} from '@shared/readings/reading.schema';
import { access } from '../../http/authorize';
import { input } from '../../http/validate';
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


/** Routes under /api/builds/:buildId: the build's readings and their export. */
export function buildReadingsRouter() {
  const router = Router({ mergeParams: true });

  router.get('/readings', access.signedIn, ...input({ params: buildIdParamsSchema, query: readingListQuerySchema }, async ({ params, query }, req, res) => {
    const build = await buildForViewer(params.buildId, req.user);
    res.json(await listReadings(build.id, query));
  }));

  router.post('/readings', access.role('builder'), ...input({ params: buildIdParamsSchema, body: readingInputSchema }, async ({ params, body }, req, res) => {
    const build = await buildForOwner(params.buildId, req.user);
    res.status(201).json({ reading: await createReading(build, req.user!, body) });
  }));

  router.post(
    '/readings/import',
    access.role('builder'),
    importBody,
    ...input({ params: buildIdParamsSchema, body: readingImportRequestSchema }, async ({ params, body }, req, res) => {
      const build = await buildForOwner(params.buildId, req.user);
      const answer = await importReadings(build, req.user!, body);
      res.status(answer.status).json(answer.body);
    }),
  );

  router.get('/readings.csv', access.signedIn, ...input({ params: buildIdParamsSchema }, async ({ params }, req, res) => {
    const build = await buildForViewer(params.buildId, req.user);
    const csv = readingsCsv(await readingDtosForBuild(build.id));
    res.set('Cache-Control', 'private, no-cache');
    res.set('Content-Disposition', `attachment; filename="build-${build.id}-readings.csv"`);
    res.type('text/csv; charset=utf-8').send(csv);
  }));

  return router;
}

/** Routes under /api/readings/:readingId: one reading, its edits and its history. */
export function readingsRouter() {
  const router = Router();
  const one = { params: readingIdParamsSchema };

  router.get('/:readingId', access.signedIn, ...input(one, async ({ params }, req, res) => {
    const { reading } = await readingForViewer(params.readingId, req.user);
    res.json({ reading: await getReading(reading) });
  }));

  router.patch('/:readingId', access.role('builder'), ...input({ params: readingIdParamsSchema, body: readingPatchSchema }, async ({ params, body }, req, res) => {
    const { reading, build } = await readingForOwner(params.readingId, req.user);
    res.json({ reading: await patchReading(reading, build, req.user!, body) });
  }));

  router.delete('/:readingId', access.role('builder'), ...input(one, async ({ params }, req, res) => {
    const { reading } = await readingForOwner(params.readingId, req.user, 'take-down');
    await deleteReading(reading);
    res.status(204).end();
  }));

  router.get('/:readingId/history', access.signedIn, ...input(one, async ({ params }, req, res) => {
    const { reading } = await readingForViewer(params.readingId, req.user);
    res.json(await readingHistory(reading));
  }));

  return router;
}
