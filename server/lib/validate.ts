import type { Request, RequestHandler, Response } from 'express';
import type { z, ZodType } from 'zod';
import { validationError } from './errors';

type Schemas = { body?: ZodType; params?: ZodType; query?: ZodType };

/**
 * Validates the request against zod schemas and replaces body/params/query with the parsed
 * output, so handlers only ever see clean, typed values.
 */
export function validate(schemas: Schemas): RequestHandler {
  return (req, _res, next) => {
    for (const where of ['params', 'query', 'body'] as const) {
      const schema = schemas[where];
      if (!schema) continue;
      const parsed = schema.safeParse(where === 'body' ? (req.body ?? {}) : req[where]);
      if (!parsed.success) return next(validationError(parsed.error, where));
      // Express 5 exposes req.query as a getter: redefine it rather than assign.
      Object.defineProperty(req, where, { value: parsed.data, writable: true, configurable: true, enumerable: true });
    }
    next();
  };
}

type Out<S> = S extends ZodType ? z.output<S> : undefined;

/**
 * A route handler whose params/query/body are parsed by zod first and passed in typed. A parse
 * failure answers 400 with every field and reason; the handler never sees raw input.
 */
export function handle<P extends ZodType | undefined = undefined, Q extends ZodType | undefined = undefined, B extends ZodType | undefined = undefined>(
  schemas: { params?: P; query?: Q; body?: B },
  fn: (input: { params: Out<P>; query: Out<Q>; body: Out<B> }, req: Request, res: Response) => Promise<unknown> | unknown,
): RequestHandler {
  return async (req, res) => {
    const input: Record<string, unknown> = {};
    for (const where of ['params', 'query', 'body'] as const) {
      const schema = schemas[where];
      if (!schema) continue;
      const parsed = schema.safeParse(where === 'body' ? (req.body ?? {}) : req[where]);
      if (!parsed.success) throw validationError(parsed.error, where);
      input[where] = parsed.data;
    }
    await fn(input as { params: Out<P>; query: Out<Q>; body: Out<B> }, req, res);
  };
}
