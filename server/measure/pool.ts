/**
 * The measurement engine off the event loop: a pool of worker threads
 * (tinypool) that runs `measure()` so a long Monte Carlo never holds up other
 * requests (and the CSV import check, `importCheckOffLoop`). Created on first use, sized to the cores
 * (`os.availableParallelism()`, at least 1; `MEASURE_THREADS` overrides), and
 * closed by `closeMeasurePool()` (the server's `close()`), so test processes
 * exit. Tasks beyond `MEASURE_QUEUE` (default 16 per thread) waiting at once
 * are refused with 503 `measure_busy`.
 *
 * Worker errors come back as the caller would have seen them from `measure()`
 * itself: a `MeasureInputError` with the same path, message and issues.
 */
import os from 'node:os';
import { Tinypool } from 'tinypool';
import type { MeasurementOutput } from '../../shared/measure/index';
import { AppError } from '../errors';
import { reviveError, type MeasureReply, type MeasureTask } from './task';
import type { DepthProfile } from '../../shared/schemas/analogues';
import type { ImportCheckReply, ImportCheckTask } from '../services/analogue-import-check';

let pool: Tinypool | null = null;
const stats = { started: 0, finished: 0 };

/** Tasks handed to the pool and tasks answered since the process started (tests watch these). */
export function measurePoolStats(): { started: number; finished: number; running: number } {
  return { ...stats, running: stats.started - stats.finished };
}

/** Threads of the pool: MEASURE_THREADS when set to a whole number ≥ 1, else the available cores (at least 1). */
export function measureThreads(env: NodeJS.ProcessEnv = process.env): number {
  const raw = env.MEASURE_THREADS?.trim();
  if (raw) {
    const n = Number(raw);
    if (!Number.isInteger(n) || n < 1) throw new Error(`MEASURE_THREADS: a whole number ≥ 1, got "${raw}"`);
    return n;
  }
  const cores = typeof os.availableParallelism === 'function' ? os.availableParallelism() : os.cpus().length;
  return Math.max(1, cores);
}

function thePool(): Tinypool {
  if (pool) return pool;
  const threads = measureThreads();
  const queue = Number(process.env.MEASURE_QUEUE ?? 16 * threads);
  pool = new Tinypool({
    filename: new URL('./worker-entry.mjs', import.meta.url).href,
    name: 'default',
    minThreads: threads,
    maxThreads: threads,
    maxQueue: Number.isFinite(queue) && queue > 0 ? queue : 16 * threads,
    // a clean worker: it registers tsx itself (worker-entry.mjs) instead of inheriting the parent's loader flags
    execArgv: [],
  });
  return pool;
}

/** `measure(input, options)` on a worker thread. */
export async function measureOffLoop(input: unknown, options?: unknown): Promise<MeasurementOutput> {
  return (await measureTaskOffLoop({ input, options })).output;
}

/** `measure(input, options)` and each buildup's depth profile (shared/analogue-shape.ts) on a worker thread. */
export async function measureWithProfilesOffLoop(input: unknown, options?: unknown): Promise<{ output: MeasurementOutput; profiles: DepthProfile[] }> {
  const r = await measureTaskOffLoop({ input, options, profiles: true });
  return { output: r.output, profiles: r.profiles ?? [] };
}

/** One task on the pool (`name`: the worker entry's export; the default is the engine), counted in the stats; a full queue answers 503 `measure_busy`. */
async function runOnPool<R>(task: unknown, name: string | undefined, busy: string): Promise<R> {
  stats.started++;
  try {
    return (await thePool().run(task, name ? { name } : undefined)) as R;
  } catch (e) {
    if (e instanceof Error && /queue is at limit/i.test(e.message)) throw new AppError(503, 'measure_busy', busy);
    throw e;
  } finally {
    stats.finished++;
  }
}

async function measureTaskOffLoop(task: MeasureTask): Promise<Extract<MeasureReply, { ok: true }>> {
  const reply = await runOnPool<MeasureReply>(task, undefined, 'The server is busy with other measurements; try again in a moment');
  if (!reply.ok) throw reviveError(reply.error);
  return reply;
}

/**
 * Parse and check a CSV import file on a worker thread (same pool and queue
 * bound as the engine). An AppError thrown there comes back as one here.
 */
export async function importCheckOffLoop(task: ImportCheckTask): Promise<Extract<ImportCheckReply, { ok: true }>> {
  const reply = await runOnPool<ImportCheckReply>(task, 'importCheck', 'The server is busy; try the import again in a moment');
  if (!reply.ok) throw new AppError(reply.error.status, reply.error.code, reply.error.message, reply.error.details);
  return reply;
}

/** Stop the worker threads (waits for none of the queued tasks). A later call starts a new pool. */
export async function closeMeasurePool(): Promise<void> {
  const p = pool;
  pool = null;
  if (p) await p.destroy();
}
