import { Router } from 'express';
import {
  specIdParamsSchema,
  specInputSchema,
  specListQuerySchema,
  specPatchSchema,
  specVersionInputSchema,
  type SpecPatch,
} from '@shared/specs/spec-library.schema';
import { access } from '../../http/authorize';
import { validQuery, validate } from '../../http/validate';
import { addSpecVersion, createSpec, getSpec, listSpecs, specForOwner, specForViewer, updateSpec } from './specs.service';

const specId = (req: { params: Record<string, unknown> }) => Number(req.params.specId);

/** The spec library, mounted at /api/specs: builders keep specs, anyone signed in reads shared ones. */
export function specsRouter() {
  const router = Router();

  router.get('/', access.signedIn, validate({ query: specListQuerySchema }), async (req, res) => {
    res.json(await listSpecs(req.user!, validQuery(res)));
  });

  router.post('/', access.role('builder'), validate({ body: specInputSchema }), async (req, res) => {
    res.status(201).json({ spec: await createSpec(req.user!, req.body) });
  });

  router.get('/:specId', access.signedIn, validate({ params: specIdParamsSchema }), async (req, res) => {
    res.json({ spec: await getSpec(await specForViewer(specId(req), req.user)) });
  });

  router.patch('/:specId', access.role('builder'), validate({ params: specIdParamsSchema, body: specPatchSchema }), async (req, res) => {
    const spec = await specForOwner(specId(req), req.user);
    res.json({ spec: await updateSpec(spec, req.body as SpecPatch) });
  });

  router.post('/:specId/versions', access.role('builder'), validate({ params: specIdParamsSchema, body: specVersionInputSchema }), async (req, res) => {
    const spec = await specForOwner(specId(req), req.user);
    res.status(201).json({ version: await addSpecVersion(spec, req.user!, req.body) });
  });

  return router;
}
