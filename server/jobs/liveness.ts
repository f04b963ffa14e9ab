/**
 * Which processes are alive. pg-boss 10 has no heartbeat of its own (an active
 * job of a killed process only fails when `expireInSeconds` runs out), so
 * every process that starts the job queue registers a row in `job_workers`
 * (id, host, pid) and refreshes `heartbeat_at` every `heartbeatSeconds`.
 *
 * A process is dead when its row is missing, its heartbeat is older than
 * `staleAfterSeconds` (database clock, so app hosts need not agree on the
 * time), or it ran on this host and its pid no longer exists (or is this
 * process's own pid under another id: an earlier incarnation, as after a
 * container restart). The pid test makes a restart on the same host find the
 * dead owner at once; elsewhere the heartbeat decides.
 */
import os from 'node:os';
import type PgBoss from 'pg-boss';
import { QueryTypes, type Sequelize, type Transaction } from 'sequelize';
import type { Config } from '../config';
import { logger } from '../logger';
import { randomName } from '../storage/fileStore';
import { transactionDb } from './queue';

/** The timing of liveness. Defaults below; `config.jobs` may override any of them (tests do). */
export interface JobTimings {
  /** How often a process refreshes its heartbeat. */
  heartbeatSeconds: number;
  /** A heartbeat older than this means a dead process. */
  staleAfterSeconds: number;
  /** How often every process looks for builds of dead processes (and their scratch). */
  checkEverySeconds: number;
  /** A build that reported no progress for this long may be retried even when its owner still beats. */
  stallSeconds: number;
}

export const DEFAULT_TIMINGS: JobTimings = { heartbeatSeconds: 10, staleAfterSeconds: 30, checkEverySeconds: 15, stallSeconds: 600 };

/** Environment variables for the timings (seconds, > 0). */
export const TIMING_ENV: Record<keyof JobTimings, string> = {
  heartbeatSeconds: 'JOB_HEARTBEAT_SECONDS',
  staleAfterSeconds: 'JOB_STALE_SECONDS',
  checkEverySeconds: 'JOB_CHECK_SECONDS',
  stallSeconds: 'JOB_STALL_SECONDS',
};

/** The timings: `config.jobs` fields first, then the environment, then the defaults. */
export function jobTimings(jobs: Config['jobs']): JobTimings {
  const o = jobs as Config['jobs'] & Partial<JobTimings>;
  const pick = (k: keyof JobTimings) => {
    const v = o[k];
    if (typeof v === 'number' && v > 0) return v;
    const raw = (process.env[TIMING_ENV[k]] ?? '').trim();
    if (raw === '') return DEFAULT_TIMINGS[k];
    const n = Number(raw);
    if (!(Number.isFinite(n) && n > 0)) throw new Error(`${TIMING_ENV[k]}: a number of seconds > 0, got "${raw}"`);
    return n;
  };
  const t = {
    heartbeatSeconds: pick('heartbeatSeconds'),
    staleAfterSeconds: pick('staleAfterSeconds'),
    checkEverySeconds: pick('checkEverySeconds'),
    stallSeconds: pick('stallSeconds'),
  };
  if (t.staleAfterSeconds < 2 * t.heartbeatSeconds) {
    logger.warn(t, 'job timings: a heartbeat is counted stale after less than two heartbeat intervals; live workers may look dead');
  }
  return t;
}

export interface WorkerRow {
  id: string;
  host: string;
  pid: number;
  /** Seconds since the last heartbeat, by the database's clock. */
  ageSeconds: number;
}

/** Whether a process with this pid exists on this host (EPERM: it exists, owned by someone else). */
export function pidExists(pid: number): boolean {
  if (!Number.isInteger(pid) || pid <= 0) return false;
  try {
    process.kill(pid, 0);
    return true;
  } catch (e) {
    return (e as NodeJS.ErrnoException).code === 'EPERM';
  }
}

export class Liveness {
  readonly id = `w${randomName(8)}`;
  readonly host = os.hostname().slice(0, 255);
  private timer: NodeJS.Timeout | null = null;

  constructor(
    private readonly sequelize: Sequelize,
    readonly timings: JobTimings,
    private readonly runsWorkers: boolean,
  ) {}

  /** Insert or refresh this process's row. */
  async beat() {
    await this.sequelize.query(
      `INSERT INTO job_workers (id, host, pid, runs_workers, started_at, heartbeat_at)
       VALUES (:id, :host, :pid, :runsWorkers, now(), now())
       ON CONFLICT (id) DO UPDATE SET heartbeat_at = now()`,
      { replacements: { id: this.id, host: this.host, pid: process.pid, runsWorkers: this.runsWorkers } },
    );
  }

  /** Register and keep beating until `stop()`. */
  async start() {
    await this.beat();
    this.timer = setInterval(() => {
      this.beat().catch((err) => logger.warn({ err }, 'job worker heartbeat failed'));
    }, this.timings.heartbeatSeconds * 1000);
    this.timer.unref();
  }

  /** Stop beating and remove the row (what this process still owned is then resumed by others). */
  async stop() {
    if (this.timer) clearInterval(this.timer);
    this.timer = null;
    await this.sequelize.query('DELETE FROM job_workers WHERE id = :id', { replacements: { id: this.id } }).catch(() => {});
  }

  /** The registered rows for these ids (missing ids have no row). */
  async workers(ids: Iterable<string>): Promise<Map<string, WorkerRow>> {
    const list = [...new Set(ids)];
    const out = new Map<string, WorkerRow>();
    if (!list.length) return out;
    const rows = await this.sequelize.query<{ id: string; host: string; pid: number; age: string | number }>(
      `SELECT id, host, pid, EXTRACT(EPOCH FROM now() - heartbeat_at) AS age FROM job_workers WHERE id IN (:ids)`,
      { replacements: { ids: list }, type: QueryTypes.SELECT },
    );
    for (const r of rows) out.set(r.id, { id: r.id, host: r.host, pid: Number(r.pid), ageSeconds: Number(r.age) });
    return out;
  }

  /** Whether the owner `id` (with its row, if any) is alive as seen from here. */
  isAlive(id: string, row: WorkerRow | undefined): boolean {
    if (id === this.id) return true;
    if (!row || row.ageSeconds > this.timings.staleAfterSeconds) return false;
    if (row.host === this.host) {
      if (row.pid === process.pid) return false; // our pid under another id: an earlier incarnation of this process
      if (!pidExists(row.pid)) return false;
    }
    return true;
  }

  /** Forget rows of processes dead for an hour (a missing row already counts as dead). */
  async prune() {
    await this.sequelize.query(`DELETE FROM job_workers WHERE heartbeat_at < now() - interval '1 hour'`);
  }
}

/** pg-boss states of a job still waiting in its queue. */
const QUEUED_STATES = new Set(['created', 'retry']);

/**
 * Why a row worked on by a queued job (a section's build, a report) has no
 * live work, or null when it has some (or is waiting in the queue):
 * - `owner_dead`: its owner's heartbeat is stale, its row is gone, or its pid is gone on this host;
 * - `job_ended`: no owner and the job is gone, completed, failed or cancelled;
 * - `unclaimed`: the job was taken (active) longer than `staleAfterSeconds` ago and never claimed
 *   (its process died between fetching and claiming).
 */
export async function deadJobReason(
  boss: PgBoss,
  queue: string,
  row: { workerId: string | null; jobId: string | null },
  owners: Map<string, WorkerRow>,
  liveness: Liveness,
  timings: Pick<JobTimings, 'staleAfterSeconds'>,
): Promise<'owner_dead' | 'job_ended' | 'unclaimed' | null> {
  if (row.workerId) return liveness.isAlive(row.workerId, owners.get(row.workerId)) ? null : 'owner_dead';
  const job = row.jobId ? await boss.getJobById(queue, row.jobId, { includeArchive: true }).catch(() => null) : null;
  if (!job) return 'job_ended';
  if (QUEUED_STATES.has(job.state)) return null;
  if (job.state === 'active') {
    const startedOn = job.startedOn ? new Date(job.startedOn).getTime() : Date.now();
    return Date.now() - startedOn > timings.staleAfterSeconds * 1000 ? 'unclaimed' : null;
  }
  return 'job_ended';
}

/** A job-owning row as the recovery sweep sees it (a depth build, a report). */
export interface OwnedJobRow {
  jobId: string | null;
  workerId: string | null;
  status: string;
  attempts: number;
  update(values: Record<string, unknown>, options: { transaction: Transaction }): Promise<unknown>;
}

/**
 * The recovery sweep shared by the row-owning jobs: for each queued/running
 * row whose job is dead (`deadJobReason`), lock the row, check nobody moved it
 * on meanwhile, cancel its stale job and either fail it after `maxAttempts`
 * or send a fresh job — all in one transaction per row.
 */
export async function requeueDeadRows<R extends OwnedJobRow, K>(o: {
  boss: PgBoss;
  queue: string;
  sequelize: Sequelize;
  liveness: Liveness;
  timings: Pick<JobTimings, 'staleAfterSeconds'>;
  maxAttempts: number;
  rows: R[];
  keyOf(row: R): K;
  /** The row again, locked for update in `transaction` (null when gone). */
  lock(row: R, transaction: Transaction): Promise<R | null>;
  /** Send the fresh job inside `transaction`; returns its id. */
  send(row: R, transaction: Transaction): Promise<string>;
  /** The failure reason after `attempts` interruptions. */
  gaveUp(attempts: number): string;
  /** Log line and field name, e.g. 'resumed a report of a dead process', 'reportId'. */
  log: [message: string, field: string];
}): Promise<{ requeued: K[]; failed: K[] }> {
  const out = { requeued: [] as K[], failed: [] as K[] };
  if (!o.rows.length) return out;
  const owners = await o.liveness.workers(o.rows.flatMap((r) => (r.workerId ? [r.workerId] : [])));
  for (const r of o.rows) {
    const why = await deadJobReason(o.boss, o.queue, r, owners, o.liveness, o.timings);
    if (!why) continue;
    const outcome = await o.sequelize.transaction(async (transaction) => {
      const cur = await o.lock(r, transaction);
      if (!cur || cur.jobId !== r.jobId || cur.workerId !== r.workerId || (cur.status !== 'queued' && cur.status !== 'running')) return null;
      if (cur.jobId) await o.boss.cancel(o.queue, cur.jobId, { db: transactionDb(transaction, o.queue) }).catch(() => {});
      if (cur.attempts >= o.maxAttempts) {
        await cur.update({ status: 'failed', workerId: null, progress: 0, failureReason: o.gaveUp(cur.attempts) }, { transaction });
        return 'failed' as const;
      }
      const jobId = await o.send(cur, transaction);
      await cur.update({ jobId, status: 'queued', workerId: null, progress: 0, attempts: cur.attempts + 1, progressAt: new Date() }, { transaction });
      return 'requeued' as const;
    });
    if (outcome) {
      out[outcome].push(o.keyOf(r));
      logger.info({ [o.log[1]]: o.keyOf(r), why, outcome }, o.log[0]);
    }
  }
  return out;
}

/** The first line of an error for a failure reason shown to people, with the storage folder hidden. */
export function failureText(err: unknown, storageDir: string): string {
  return (err instanceof Error ? err.message : String(err)).split('\n')[0].split(storageDir).join('…').slice(0, 300);
}
