import { Router } from 'express';
import type { z } from 'zod';
import { buildIdParamsSchema } from '@shared/builds/build.schema';
import {
  clearanceIdParamsSchema,
  clearanceInputSchema,
  clearanceListQuerySchema,
  clearancePatchSchema,
  type ClearancePatch,
} from '@shared/clearances/clearance.schema';
import { access } from '../../http/authorize';
import { validQuery, validate } from '../../http/validate';
import { buildForOwner, buildForViewer } from '../builds/builds.service';
import {
  clearanceForOwner,
  clearanceForViewer,
  createClearance,
  deleteClearance,
  getClearance,
  listClearances,
  patchClearance,
} from './clearances.service';

const clearanceId = (req: { params: Record<string, unknown> }) => Number(req.params.clearanceId);

/** Routes under /api/builds/:buildId/clearances: list and create. */
export function buildClearancesRouter() {
  const router = Router({ mergeParams: true });

  router.get('/', access.signedIn, validate({ params: buildIdParamsSchema, query: clearanceListQuerySchema }), async (req, res) => {
    const build = await buildForViewer(Number(req.params.buildId), req.user);
    res.json(await listClearances(build.id, validQuery<z.output<typeof clearanceListQuerySchema>>(res)));
  });

  router.post('/', access.role('builder'), validate({ params: buildIdParamsSchema, body: clearanceInputSchema }), async (req, res) => {
    const build = await buildForOwner(Number(req.params.buildId), req.user);
    res.status(201).json({ clearance: await createClearance(build, req.user!, req.body as z.output<typeof clearanceInputSchema>) });
  });

  return router;
}

/** Routes under /api/clearances/:clearanceId. */
export function clearancesRouter() {
  const router = Router();
  const one = validate({ params: clearanceIdParamsSchema });

  router.get('/:clearanceId', access.signedIn, one, async (req, res) => {
    const { clearance } = await clearanceForViewer(clearanceId(req), req.user);
    res.json({ clearance: await getClearance(clearance) });
  });

  router.patch('/:clearanceId', access.role('builder'), validate({ params: clearanceIdParamsSchema, body: clearancePatchSchema }), async (req, res) => {
    const { clearance, build } = await clearanceForOwner(clearanceId(req), req.user);
    res.json({ clearance: await patchClearance(clearance, build, req.user!, req.body as ClearancePatch) });
  });

  router.delete('/:clearanceId', access.role('builder'), one, async (req, res) => {
    const { clearance } = await clearanceForOwner(clearanceId(req), req.user, 'take-down');
    await deleteClearance(clearance);
    res.status(204).end();
  });

  return router;
}
