/**
 * The durable job queue: pg-boss in the same PostgreSQL database (schema
 * `pgboss`). `startJobs` is called by `boot()` (server/index.ts); web
 * processes and separate worker processes (server/scripts/worker.ts) share it.
 *
 * Jobs are sent inside the caller's database transaction (pg-boss `db`
 * option over the transaction's own connection), so a section row and its
 * job appear together or not at all.
 */
import PgBoss from 'pg-boss';
import type { Sequelize, Transaction } from 'sequelize';
import type { Config } from '../config';
import { logger } from '../logger';

export const PYRAMID_QUEUE = 'section-pyramid';

export interface PyramidJobData {
  sectionId: number;
}

export interface JobQueue {
  boss: PgBoss;
  stop(): Promise<void>;
}

let current: { boss: PgBoss; config: Config; workerIds: string[] } | null = null;

export function jobQueue(): PgBoss {
  if (!current) throw new Error('job queue used before startJobs()');
  return current.boss;
}

/** pg-boss's `db` option over a Sequelize transaction's own connection (every job sent or cancelled with a row change uses it). */
export function transactionDb(transaction: Transaction, what: string) {
  const client = (transaction as unknown as { connection?: { query(text: string, values: unknown[]): Promise<{ rows: unknown[] }> } }).connection;
  if (!client) throw new Error(`${what}: the transaction has no connection yet`);
  return { executeSql: (text: string, values: unknown[]) => client.query(text, values) as Promise<{ rows: any[] }> };
}

/** Send a pyramid job within `transaction`; returns the job id. */
export async function sendPyramidJob(sectionId: number, transaction: Transaction): Promise<string> {
  const boss = jobQueue();
  const db = transactionDb(transaction, 'sendPyramidJob');
  const { jobs } = current!.config;
  const id = await boss.send(
    PYRAMID_QUEUE,
    { sectionId } satisfies PyramidJobData,
    { db, retryLimit: 2, retryDelay: 10, expireInSeconds: jobs.expireInSeconds },
  );
  if (!id) throw new Error('the job queue refused the pyramid job');
  return id;
}

/**
 * Cancel a pyramid job within `transaction` (a no-op once it completed,
 * failed or was cancelled). An active job of a dead process is cancelled
 * here instead of waiting for its expiry; its handler, should it still run
 * somewhere, finds the section's job id changed and stops.
 */
export async function cancelPyramidJob(jobId: string | null | undefined, transaction: Transaction): Promise<void> {
  if (!jobId) return;
  await jobQueue().cancel(PYRAMID_QUEUE, jobId, { db: transactionDb(transaction, 'cancelPyramidJob') });
}

/** Wake this process's workers now instead of at their next poll (call after the sending transaction committed). */
export function nudgeWorkers() {
  if (!current) return;
  for (const id of current.workerIds) current.boss.notifyWorker(id);
}

export interface StartJobsDeps {
  databaseUrl: string;
  config: Config;
  sequelize: Sequelize;
  /** Runs once the queue exists, before workers start (recovery of interrupted work). */
  onReady?: (boss: PgBoss) => Promise<void>;
  handlers: { pyramid: (job: PgBoss.Job<PyramidJobData>) => Promise<void> };
}

/** Attempts of `createQueue` that lose a deadlock to another process creating queues at the same time. */
const CREATE_QUEUE_ATTEMPTS = 8;

/**
 * pg-boss `createQueue`, retried when PostgreSQL picks it as the victim of a
 * deadlock (40P01). Processes that boot together on a fresh database create
 * the same queues at once: one inserts a queue row while another attaches its
 * queue's partition to the job table, and each waits for the other. The
 * victim's transaction is rolled back whole, so trying again is safe; by then
 * the queue usually exists and the call does nothing.
 */
export async function createQueue(boss: Pick<PgBoss, 'createQueue'>, name: string, options?: PgBoss.Queue): Promise<void> {
  for (let attempt = 1; ; attempt++) {
    try {
      await boss.createQueue(name, options);
      return;
    } catch (err) {
      if ((err as { code?: string }).code !== '40P01' || attempt >= CREATE_QUEUE_ATTEMPTS) throw err;
      logger.info({ queue: name, attempt }, 'creating a job queue lost a deadlock to another process; trying again');
      await new Promise((r) => setTimeout(r, 20 + Math.random() * 80 * attempt));
    }
  }
}

export async function startJobs(deps: StartJobsDeps): Promise<JobQueue> {
  const boss = new PgBoss({ connectionString: deps.databaseUrl, schema: 'pgboss', max: 4, application_name: 'cayline-jobs' });
  boss.on('error', (err) => logger.error({ err }, 'job queue error'));
  await boss.start();
  await createQueue(boss, PYRAMID_QUEUE);
  current = { boss, config: deps.config, workerIds: [] };
  const mine = current;
  if (deps.onReady) await deps.onReady(boss);
  if (deps.config.jobs.runWorkers) {
    const id = await boss.work<PyramidJobData>(
      PYRAMID_QUEUE,
      { pollingIntervalSeconds: deps.config.jobs.pollingIntervalSeconds, batchSize: 1 },
      async (jobs) => {
        for (const job of jobs) await deps.handlers.pyramid(job);
      },
    );
    mine.workerIds.push(id);
  }
  return {
    boss,
    async stop() {
      await boss.stop({ graceful: true, timeout: 15_000, wait: true });
      if (current === mine) current = null;
    },
  };
}
