import { Router } from 'express';
import {
  specIdParamsSchema,
  specInputSchema,
  specListQuerySchema,
  specPatchSchema,
  specVersionInputSchema,
} from '@shared/specs/spec-library.schema';
import { access } from '../../http/authorize';
import { input } from '../../http/validate';
import { addSpecVersion, createSpec, getSpec, listSpecs, specForOwner, specForViewer, updateSpec } from './specs.service';

/** The spec library, mounted at /api/specs: builders keep specs, anyone signed in reads shared ones. */
export function specsRouter() {
  const router = Router();

  router.get('/', access.signedIn, ...input({ query: specListQuerySchema }, async ({ query }, req, res) => {
    res.json(await listSpecs(req.user!, query));
  }));

  router.post('/', access.role('builder'), ...input({ body: specInputSchema }, async ({ body }, req, res) => {
    res.status(201).json({ spec: await createSpec(req.user!, body) });
  }));

  router.get('/:specId', access.signedIn, ...input({ params: specIdParamsSchema }, async ({ params }, req, res) => {
    res.json({ spec: await getSpec(await specForViewer(params.specId, req.user)) });
  }));

  router.patch('/:specId', access.role('builder'), ...input({ params: specIdParamsSchema, body: specPatchSchema }, async ({ params, body }, req, res) => {
    const spec = await specForOwner(params.specId, req.user);
    res.json({ spec: await updateSpec(spec, body) });
  }));

  router.post('/:specId/versions', access.role('builder'), ...input({ params: specIdParamsSchema, body: specVersionInputSchema }, async ({ params, body }, req, res) => {
    const spec = await specForOwner(params.specId, req.user);
    res.status(201).json({ version: await addSpecVersion(spec, req.user!, body) });
  }));

  return router;
}
