import { Router } from 'express';
import {
  instrumentIdParamsSchema,
  instrumentInputSchema,
  instrumentListQuerySchema,
  instrumentPatchSchema,
  zeroCheckInputSchema,
  zeroCheckListQuerySchema,
  type InstrumentPatch,
} from '@shared/instruments/instrument.schema';
import { access } from '../../http/authorize';
import { validQuery, validate } from '../../http/validate';
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

const instrumentId = (req: { params: Record<string, unknown> }) => Number(req.params.instrumentId);

/** A builder's instrument register and zero checks, mounted at /api/instruments. Reviewers may look. */
export function instrumentsRouter() {
  const router = Router();
  const one = validate({ params: instrumentIdParamsSchema });

  router.get('/', access.role('builder'), validate({ query: instrumentListQuerySchema }), async (req, res) => {
    res.json(await listInstruments(req.user!, validQuery(res)));
  });

  router.post('/', access.role('builder'), validate({ body: instrumentInputSchema }), async (req, res) => {
    res.status(201).json({ instrument: await createInstrument(req.user!, req.body) });
  });

  router.get('/:instrumentId', access.signedIn, one, async (req, res) => {
    res.json({ instrument: await getInstrument(await instrumentForViewer(instrumentId(req), req.user)) });
  });

  router.patch('/:instrumentId', access.role('builder'), validate({ params: instrumentIdParamsSchema, body: instrumentPatchSchema }), async (req, res) => {
    const instrument = await instrumentForOwner(instrumentId(req), req.user);
    res.json({ instrument: await updateInstrument(instrument, req.body as InstrumentPatch) });
  });

  router.delete('/:instrumentId', access.role('builder'), one, async (req, res) => {
    await deleteInstrument(await instrumentForOwner(instrumentId(req), req.user));
    res.status(204).end();
  });

  router.get('/:instrumentId/zero-checks', access.signedIn, validate({ params: instrumentIdParamsSchema, query: zeroCheckListQuerySchema }), async (req, res) => {
    const instrument = await instrumentForViewer(instrumentId(req), req.user);
    res.json(await listZeroChecks(instrument, validQuery(res)));
  });

  router.post(
    '/:instrumentId/zero-checks',
    access.role('builder'),
    validate({ params: instrumentIdParamsSchema, body: zeroCheckInputSchema }),
    async (req, res) => {
      const instrument = await instrumentForOwner(instrumentId(req), req.user);
      res.status(201).json({ zeroCheck: await addZeroCheck(instrument, req.user!, req.body) });
    },
  );

  return router;
}
