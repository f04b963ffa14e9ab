/**
 * The server's error types, imported by services, controllers, jobs and
 * middleware alike (no layer imports another one just for its errors). The
 * one error handler (middlewares/errors.ts) turns them into
 * `{ code, message, details? }`.
 */
import type { ZodError } from 'zod';
import { formatIssuePath } from '../shared/api-errors';

/** The one error type services throw. */
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

/** Turn a ZodError into a 400 whose message names every bad field's path (`prefix` goes in front of each path). */
export function validationError(err: ZodError, prefix?: string): AppError {
  const details = err.issues.map((i) => {
    const p = formatIssuePath(prefix ? [prefix, ...i.path] : i.path);
    return { path: p, message: i.message };
  });
  const message = details.map((d) => (d.path ? `${d.path}: ${d.message}` : d.message)).join('; ');
  return new AppError(400, 'validation_failed', message, details);
}
