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

/** What a handler gets from `input()`: each part parsed by its schema (an empty object when none was given). */
export type Input<S extends Schemas> = {
  params: S['params'] extends z.ZodType ? z.output<S['params']> : Record<string, never>;
  query: S['query'] extends z.ZodType ? z.output<S['query']> : Record<string, never>;
  body: S['body'] extends z.ZodType ? z.output<S['body']> : Record<string, never>;
};

/**
 * A validated route's handlers: `validate(schemas)`, then `handler` called with the parsed
 * params, query and body, typed from the schemas it was validated with, so a handler never casts
 * `req.body` or re-parses `req.params`. Spread it after the access check:
 * `router.put('/:clipId/x', access.role('builder'), ...input({ params, body }, async ({ params, body }, req, res) => …))`.
 */
export function input<S extends Schemas>(
  schemas: S,
  handler: (input: Input<S>, req: Parameters<RequestHandler>[0], res: Parameters<RequestHandler>[1]) => unknown,
): [RequestHandler, RequestHandler] {
  return [
    validate(schemas),
    async (req, res, next) => {
      try {
        const parsed = {
          params: schemas.params ? req.params : {},
          query: schemas.query ? res.locals.query : {},
          body: schemas.body ? req.body : {},
        } as Input<S>;
        await handler(parsed, req, res);
      } catch (err) {
        next(err);
      }
    },
  ];
}
