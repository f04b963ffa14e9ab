import type { RequestHandler } from 'express';
import type { ZodType } from 'zod';
import { validationError } from './errors';

type Where = 'body' | 'query' | 'params';

/**
 * Validate `req[where]` with a shared zod schema. The parsed value is kept in
 * `res.locals[where]` (Express 5 makes req.query read-only).
 */
export function validate(schema: ZodType, where: Where = 'body'): RequestHandler {
  return (req, res, next) => {
    const r = schema.safeParse(req[where] ?? {});
    if (!r.success) return next(validationError(r.error));
    res.locals[where] = r.data;
    next();
  };
}
