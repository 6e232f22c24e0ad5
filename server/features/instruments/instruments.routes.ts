import { Router } from 'express';
import {
  instrumentIdParamsSchema,
  instrumentInputSchema,
  instrumentListQuerySchema,
  instrumentPatchSchema,
  zeroCheckInputSchema,
  zeroCheckListQuerySchema,
} from '@shared/instruments/instrument.schema';
import { access } from '../../http/authorize';
import { input } from '../../http/validate';
import {
  addZeroCheck,
  createInstrument,
  deleteInstrument,
  getInstrument,
  instrumentForOwner,
  instrumentForViewer,
  listInstruments,
  listZeroChecks,
  updateInstrument,
} from './instruments.service';

/** A builder's instrument register and zero checks, mounted at /api/instruments. Reviewers may look. */
export function instrumentsRouter() {
  const router = Router();
  const one = { params: instrumentIdParamsSchema };

  router.get('/', access.role('builder'), ...input({ query: instrumentListQuerySchema }, async ({ query }, req, res) => {
    res.json(await listInstruments(req.user!, query));
  }));

  router.post('/', access.role('builder'), ...input({ body: instrumentInputSchema }, async ({ body }, req, res) => {
    res.status(201).json({ instrument: await createInstrument(req.user!, body) });
  }));

  router.get('/:instrumentId', access.signedIn, ...input(one, async ({ params }, req, res) => {
    res.json({ instrument: await getInstrument(await instrumentForViewer(params.instrumentId, req.user)) });
  }));

  router.patch('/:instrumentId', access.role('builder'), ...input({ params: instrumentIdParamsSchema, body: instrumentPatchSchema }, async ({ params, body }, req, res) => {
    const instrument = await instrumentForOwner(params.instrumentId, req.user);
    res.json({ instrument: await updateInstrument(instrument, body) });
  }));

  router.delete('/:instrumentId', access.role('builder'), ...input(one, async ({ params }, req, res) => {
    await deleteInstrument(await instrumentForOwner(params.instrumentId, req.user));
    res.status(204).end();
  }));

  router.get('/:instrumentId/zero-checks', access.signedIn, ...input({ params: instrumentIdParamsSchema, query: zeroCheckListQuerySchema }, async ({ params, query }, req, res) => {
    const instrument = await instrumentForViewer(params.instrumentId, req.user);
    res.json(await listZeroChecks(instrument, query));
  }));

  router.post(
    '/:instrumentId/zero-checks',
    access.role('builder'),
    ...input({ params: instrumentIdParamsSchema, body: zeroCheckInputSchema }, async ({ params, body }, req, res) => {
      const instrument = await instrumentForOwner(params.instrumentId, req.user);
      res.status(201).json({ zeroCheck: await addZeroCheck(instrument, req.user!, body) });
    }),
  );

  return router;
}
