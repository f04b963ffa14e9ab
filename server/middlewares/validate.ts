import type { RequestHandler } from 'express';
import type { ZodType } from 'zod';
import { validationError } from '../errors';

type Where = 'body' | 'query' | 'params';

/**
 * Validate `req[where]` with a shared zod schema. The parsed value is kept in
 * `res.locals[where]` (Express 5 makes req.query read-only).
 */
export function validate(schema: ZodType, where: Where = 'body'): RequestHandler {
  const handler: RequestHandler = (req, res, next) => {
    const r = schema.safeParse(req[where] ?? {});
    if (!r.success) return next(validationError(r.error));
    res.locals[where] = r.data;
    next();
  };
  // the OpenAPI document (server/openapi/) reads which schema checks which part of the request
  Object.defineProperty(handler, VALIDATES, { value: { schema, where } });
  return handler;
}

/** Key of the `{ schema, where }` a `validate()` handler carries. */
export const VALIDATES = Symbol('validates');

/** The schema and request part a handler validates, when it is a `validate()` handler. */
export function validatedBy(handler: unknown): { schema: ZodType; where: Where } | null {
  return typeof handler === 'function' && VALIDATES in handler ? (handler as unknown as Record<symbol, { schema: ZodType; where: Where }>)[VALIDATES] : null;
}
