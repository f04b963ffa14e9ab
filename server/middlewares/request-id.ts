/**
 * Every request gets an id: a sane incoming `X-Request-Id` (from a proxy or a
 * client, 1–128 of letters, digits and `._:-`) is kept, anything else is
 * replaced by a random UUID. The id is echoed in the `X-Request-Id` response
 * header, kept in `res.locals.reqId`, and put on every log line written while
 * the request is served (server/logger.ts). One line per finished request
 * (`request done`: method, path without the query, status, ms); 5xx answers
 * log at error level, health probes at debug.
 */
import crypto from 'node:crypto';
import type { RequestHandler } from 'express';
import { logger, requestScope } from '../logger';

export const REQUEST_ID_HEADER = 'X-Request-Id';
const SANE_ID = /^[A-Za-z0-9._:-]{1,128}$/;

/** The incoming id when it is sane, else a fresh UUID. */
export function requestIdFrom(incoming: unknown): string {
  return typeof incoming === 'string' && SANE_ID.test(incoming) ? incoming : crypto.randomUUID();
}

export const requestId: RequestHandler = (req, res, next) => {
  const reqId = requestIdFrom(req.headers['x-request-id']);
  res.locals.reqId = reqId;
  res.setHeader(REQUEST_ID_HEADER, reqId);
  const started = process.hrtime.bigint();
  const path = req.originalUrl.split('?')[0];
  res.on('finish', () => {
    const ms = Number(process.hrtime.bigint() - started) / 1e6;
    const line = { reqId, method: req.method, path, status: res.statusCode, ms: Math.round(ms * 10) / 10 };
    if (res.statusCode >= 500) logger.error(line, 'request done');
    else if (path.startsWith('/api/health')) logger.debug(line, 'request done');
    else logger.info(line, 'request done');
  });
  requestScope.run({ reqId }, () => next());
};
