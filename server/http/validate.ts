import type { RequestHandler } from 'express';
import type { z } from 'zod';

interface Schemas {
  body?: z.ZodType;
  query?: z.ZodType;
  params?: z.ZodType;
}

/**
 * Parses body, query and params with shared zod schemas. A ZodError goes to the error
 * middleware (400). Parsed values replace the raw ones; query is exposed as res.locals.query
 * because Express 5 makes req.query a getter.
 */
export function validate(schemas: Schemas): RequestHandler {
  return (req, res, next) => {
    if (schemas.params) req.params = schemas.params.parse(req.params) as typeof req.params;
    if (schemas.query) res.locals.query = schemas.query.parse(req.query);
    if (schemas.body) req.body = schemas.body.parse(req.body ?? {});
    next();
  };
}

/** The validated query of a request that went through validate({ query }). */
export function validQuery<T>(res: { locals: Record<string, unknown> }): T {
  return res.locals.query as T;
}
