/**
 * Health checks for orchestrators and load balancers.
 *
 * - liveness: the process answers (no database, no store): restart it when this fails;
 * - readiness: the database answers, every migration this code knows is
 *   recorded in `schema_migrations`, and the file store takes a write (a probe
 *   object under `health/` written and removed through the store's own
 *   interface, so either driver is checked): send it traffic only when this passes.
 *
 * Each check has its own time limit, so a hung database cannot hang the probe.
 */
import { QueryTypes } from 'sequelize';
import { ctx } from '../context';
import { migrations } from '../db/migrations/index';
import { fileStoreFor, randomName } from '../storage/fileStore';

export const READY_CHECKS = ['database', 'migrations', 'store'] as const;
export type ReadyCheck = (typeof READY_CHECKS)[number];
export type CheckResult = { ok: true } | { ok: false; message: string };

/** Milliseconds one readiness check may take before it counts as failed. */
export const CHECK_TIMEOUT_MS = 3000;

async function timed<T>(what: string, p: Promise<T>): Promise<T> {
  let timer: NodeJS.Timeout | undefined;
  const timeout = new Promise<never>((_, reject) => {
    timer = setTimeout(() => reject(new Error(`${what} did not answer within ${CHECK_TIMEOUT_MS} ms`)), CHECK_TIMEOUT_MS);
  });
  try {
    return await Promise.race([p, timeout]);
  } finally {
    clearTimeout(timer);
  }
}

const failed = (e: unknown): CheckResult => ({ ok: false, message: e instanceof Error ? e.message : String(e) });

export async function checkDatabase(): Promise<CheckResult> {
  try {
    await timed('the database', ctx().sequelize.query('SELECT 1'));
    return { ok: true };
  } catch (e) {
    return failed(e);
  }
}

/** Every migration in server/db/migrations/index.ts is recorded as applied. */
export async function checkMigrations(): Promise<CheckResult> {
  try {
    const rows = await timed('the database', ctx().sequelize.query<{ name: string }>('SELECT name FROM schema_migrations', { type: QueryTypes.SELECT }));
    const done = new Set(rows.map((r) => r.name));
    const pending = migrations.map((m) => m.name).filter((n) => !done.has(n));
    if (pending.length) return { ok: false, message: `${pending.length} pending: ${pending.join(', ')}` };
    return { ok: true };
  } catch (e) {
    return failed(e);
  }
}

/** Write and remove a small probe object through the file store. */
export async function checkStore(): Promise<CheckResult> {
  const store = fileStoreFor(ctx().config.storageDir);
  const key = `health/probe-${randomName(8)}`;
  try {
    await timed('the file store', store.put(key, Buffer.from('ready')));
    return { ok: true };
  } catch (e) {
    return failed(e);
  } finally {
    await store.removePrefix(key).catch(() => {});
  }
}

export async function readiness(): Promise<Record<ReadyCheck, CheckResult>> {
  const [database, migrationsResult, store] = await Promise.all([checkDatabase(), checkMigrations(), checkStore()]);
  return { database, migrations: migrationsResult, store };
}
