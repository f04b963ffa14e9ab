import type { ErrorRequestHandler, RequestHandler } from 'express';
import { ZodError } from 'zod';
import { MulterError } from 'multer';
import { formatIssuePath, type ApiErrorBody } from '../../shared/api-errors';
import { logger } from '../logger';
import { MeasureInputError } from '../../shared/measure/errors';

/** The one error type services throw; the error handler turns it into `{ code, message, details? }`. */
export class AppError extends Error {
  constructor(
    public status: number,
    public code: string,
    message: string,
    public details?: unknown,
  ) {
    super(message);
  }
}

export const notFound = (what = 'Resource') => new AppError(404, 'not_found', `${what} not found`);
export const forbidden = (message = 'You are not allowed to do this') => new AppError(403, 'forbidden', message);

/** Turn a ZodError into a 400 whose message names every bad field's path. */
export function validationError(err: ZodError, prefix?: string): AppError {
  const details = err.issues.map((i) => {
    const p = formatIssuePath(prefix ? [prefix, ...i.path] : i.path);
    return { path: p, message: i.message };
  });
  const message = details.map((d) => (d.path ? `${d.path}: ${d.message}` : d.message)).join('; ');
  return new AppError(400, 'validation_failed', message, details);
}

export const apiNotFound: RequestHandler = (req, _res, next) => {
  next(new AppError(404, 'not_found', `No route ${req.method} ${req.path}`));
};

export const errorHandler: ErrorRequestHandler = (err, req, res, _next) => {
  let e: AppError;
  if (err instanceof AppError) e = err;
  else if (err instanceof ZodError) e = validationError(err);
  else if (err instanceof MeasureInputError) {
    const details = err.issues.map((text) => {
      const i = text.indexOf(': ');
      return i > 0 ? { path: text.slice(0, i), message: text.slice(i + 2) } : { path: '', message: text };
    });
    e = new AppError(400, 'validation_failed', err.message, details);
  }
  else if (err instanceof MulterError) {
    const status = err.code === 'LIMIT_FILE_SIZE' ? 413 : 400;
    e = new AppError(status, 'upload_rejected', `${err.field ?? 'file'}: ${err.message}`);
  } else if (err?.type === 'entity.parse.failed') e = new AppError(400, 'bad_json', 'The request body is not valid JSON');
  else if (err?.type === 'entity.too.large') e = new AppError(413, 'too_large', 'The request body is too large');
  else {
    logger.error({ err, path: req.path }, 'unhandled error');
    e = new AppError(500, 'internal', 'Something went wrong on the server');
  }
  if (res.headersSent) return;
  const body: ApiErrorBody = { code: e.code, message: e.message };
  if (e.details !== undefined) body.details = e.details;
  res.status(e.status).json(body);
};
