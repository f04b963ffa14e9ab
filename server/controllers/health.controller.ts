import type { RequestHandler } from 'express';
import { DB_RETRY_AFTER_SECONDS } from '../middlewares/errors';
import { checkDatabase, readiness, READY_CHECKS } from '../services/health.service';

/** Liveness: the process is up and its event loop turns; nothing else is asked. */
export const live: RequestHandler = (_req, res) => {
  res.json({ status: 'ok', uptimeSeconds: Math.round(process.uptime()) });
};

/**
 * Readiness: 200 `{ status: 'ok', checks }`, or 503 in the error shape
 * `{ code: 'not_ready', message, details: [{ path: 'checks.<name>', message }], checks }`
 * naming each failing check, with Retry-After.
 */
export const ready: RequestHandler = async (_req, res) => {
  const results = await readiness();
  const checks = Object.fromEntries(READY_CHECKS.map((k) => [k, results[k].ok ? 'ok' : 'failed']));
  const failing = READY_CHECKS.flatMap((k) => {
    const r = results[k];
    return r.ok ? [] : [{ path: `checks.${k}`, message: r.message }];
  });
  if (!failing.length) return void res.json({ status: 'ok', checks });
  res.set('Retry-After', String(DB_RETRY_AFTER_SECONDS));
  res.status(503).json({
    code: 'not_ready',
    message: `Not ready: ${failing.map((f) => `${f.path.slice('checks.'.length)} (${f.message})`).join('; ')}`,
    details: failing,
    checks,
  });
};

/** The original check (database only), kept for existing probes and as the benchmarks' baseline. */
export const legacy: RequestHandler = async (_req, res) => {
  const db = (await checkDatabase()).ok ? 'ok' : 'down';
  if (db !== 'ok') res.set('Retry-After', String(DB_RETRY_AFTER_SECONDS));
  res.status(db === 'ok' ? 200 : 503).json({ status: db === 'ok' ? 'ok' : 'degraded', db });
};
