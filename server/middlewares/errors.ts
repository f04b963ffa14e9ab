import type { ErrorRequestHandler, RequestHandler } from 'express';
import { ZodError } from 'zod';
import { BaseError as SequelizeError, ConnectionError as SequelizeConnectionError, UniqueConstraintError } from 'sequelize';
import { MulterError } from 'multer';
import type { ApiErrorBody } from '../../shared/api-errors';
import { AppError, validationError } from '../errors';
import { logger } from '../logger';
import { MeasureInputError } from '../../shared/measure/errors';

/** Re-exported for code written before server/errors.ts; import the error classes from '../errors'. */
export { AppError, notFound, forbidden, validationError } from '../errors';

/** Seconds a client is told to wait (Retry-After) when the database is unavailable. */
export const DB_RETRY_AFTER_SECONDS = 5;

/**
 * PostgreSQL SQLSTATEs meaning "the server cannot serve now" (PostgreSQL
 * manual, Appendix A "PostgreSQL Error Codes"): class 08 connection exception,
 * 57P01 admin_shutdown, 57P02 crash_shutdown, 57P03 cannot_connect_now,
 * 53300 too_many_connections.
 */
const PG_UNAVAILABLE = new Set(['57P01', '57P02', '57P03', '53300']);
/** Socket errors of the database connection (Node.js system error codes). */
const SOCKET_UNAVAILABLE = new Set(['ECONNREFUSED', 'ECONNRESET', 'ETIMEDOUT', 'EHOSTUNREACH', 'ENETUNREACH', 'ENOTFOUND', 'EAI_AGAIN', 'EPIPE']);
/** Messages of node-postgres when a connection dies or cannot be made (they carry no code). */
const PG_CONNECTION_MESSAGE = /^(Connection terminated|timeout expired|Client has encountered a connection error|Connection terminated unexpectedly)/i;

function pgErrorUnavailable(e: unknown): boolean {
  if (!e || typeof e !== 'object') return false;
  const { code, message } = e as { code?: unknown; message?: unknown };
  if (typeof code === 'string' && (code.startsWith('08') || PG_UNAVAILABLE.has(code) || SOCKET_UNAVAILABLE.has(code))) return true;
  return typeof message === 'string' && PG_CONNECTION_MESSAGE.test(message);
}

/**
 * True when `err` says the database cannot be reached or is going away:
 * Sequelize's ConnectionError family (ConnectionRefusedError,
 * ConnectionAcquireTimeoutError, HostNotFoundError, AccessDeniedError, …), or a
 * Sequelize error wrapping such a node-postgres error. Plain errors from other
 * sockets (mail, the client's own connection) are not taken for it.
 */
export function isDatabaseUnavailable(err: unknown): boolean {
  if (err instanceof SequelizeConnectionError) return true;
  if (err instanceof SequelizeError) {
    const { original, parent } = err as SequelizeError & { original?: unknown; parent?: unknown };
    return pgErrorUnavailable(original ?? parent);
  }
  return false;
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
  else if (err?.type === 'entity.too.large') {
    const limit = typeof err.limit === 'number' ? ` of ${err.limit} bytes` : '';
    e = new AppError(413, 'too_large', `The request body is larger than the limit${limit} for this route`);
  } else if (err?.type === 'charset.unsupported' || err?.type === 'encoding.unsupported') {
    e = new AppError(415, 'unsupported_body', `The request body cannot be read: ${err.message}`);
  } else if (isDatabaseUnavailable(err)) {
    logger.warn({ path: req.path, reason: err?.message }, 'database unavailable');
    e = new AppError(503, 'database_unavailable', `The database is unavailable; try again in a few seconds`);
    if (!res.headersSent) res.set('Retry-After', String(DB_RETRY_AFTER_SECONDS));
  } else if (err instanceof UniqueConstraintError) {
    // A check-then-insert that lost a race to another request (SQLSTATE 23505): the other one's record stands.
    logger.warn({ path: req.path, constraint: (err as UniqueConstraintError & { parent?: { constraint?: string } }).parent?.constraint }, 'unique constraint met');
    e = new AppError(409, 'already_exists', 'The same record was created by another request meanwhile; reload to see it');
  } else {
    logger.error({ err, path: req.path }, 'unhandled error');
    e = new AppError(500, 'internal', 'Something went wrong on the server');
  }
  if (res.headersSent) return;
  const body: ApiErrorBody = { code: e.code, message: e.message };
  if (e.details !== undefined) body.details = e.details;
  res.status(e.status).json(body);
};
