/**
 * Reading row ids from the path: every controller takes `:id`-like
 * parameters through `idParam(req, name)` (and kept versions through
 * `wholeParam`), which apply the one rule of shared/schemas/ids.ts and answer
 * 400 `validation_failed` naming the parameter (`details[0].path`).
 */
import type { Request } from 'express';
import { idParamSchema, wholeParamSchema } from '../../shared/schemas/ids';
import { validationError } from '../errors';

function parse(schema: typeof idParamSchema, req: Request, name: string): number {
  const r = schema.safeParse(req.params[name]);
  if (!r.success) throw validationError(r.error, name);
  return r.data;
}

/** `req.params[name]` as a row id (1 … 2³¹ − 1). */
export function idParam(req: Request, name = 'id'): number {
  return parse(idParamSchema, req, name);
}

/** `req.params[name]` as a whole number ≥ 0 (a kept version). */
export function wholeParam(req: Request, name: string): number {
  return parse(wholeParamSchema, req, name);
}
