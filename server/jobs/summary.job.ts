/**
 * The `buildup-summary` queue: measures a stored buildup with the default
 * options on the measurement pool (server/measure/pool.ts, never the event
 * loop) and keeps its register summary (server/services/summary-store.ts).
 *
 * Sent inside the transaction of every buildup save, and by the register for
 * buildups whose summary is missing or stale (a new calibration or velocity
 * model). The queue's `short` policy keeps at most one queued job per buildup
 * (`singletonKey`); a queued job measures whatever version is current when it
 * runs.
 */
import type PgBoss from 'pg-boss';
import type { Transaction } from 'sequelize';
import type { Config } from '../config';
import { ctx } from '../context';
import { logger } from '../logger';
import { Buildup, SectionVelocity } from '../models/buildup';
import { Section, SectionCalibration } from '../models/section';
import { AppError } from '../errors';
import { jobQueue } from './queue';
import { writeSummary } from '../services/summary-store';
import { startBatchJobs } from './report-batch.job';

export const SUMMARY_QUEUE = 'buildup-summary';

export interface SummaryJobData {
  buildupId: number;
}

function transactionDb(transaction: Transaction) {
  const client = (transaction as unknown as { connection?: { query(text: string, values: unknown[]): Promise<{ rows: unknown[] }> } }).connection;
  if (!client) throw new Error('sendSummaryJob: the transaction has no connection yet');
  return { executeSql: (text: string, values: unknown[]) => client.query(text, values) as Promise<{ rows: any[] }> };
}

function queueOrNull(): PgBoss | null {
  try {
    return jobQueue();
  } catch {
    return null; // no queue in this process (a script): the register finds the summary stale and asks again
  }
}

/** Queue a summary refresh of one buildup (within `transaction` when given). A queued one for the same buildup is enough. */
export async function sendSummaryJob(buildupId: number, transaction?: Transaction): Promise<void> {
  const boss = queueOrNull();
  if (!boss) return;
  await boss.send(SUMMARY_QUEUE, { buildupId } satisfies SummaryJobData, {
    singletonKey: `b${buildupId}`,
    retryLimit: 3,
    retryDelay: 2,
    ...(transaction ? { db: transactionDb(transaction) } : {}),
  });
}

/** Measure one buildup's current version and keep its summary. Exported for tests. */
export async function refreshSummary(buildupId: number): Promise<void> {
  const buildup = await Buildup.findByPk(buildupId);
  if (!buildup) return; // deleted meanwhile
  const section = await Section.findByPk(buildup.sectionId);
  if (!section) return;
  // imported here: buildup.service sends these jobs, so a top-level import would be circular
  const { measureStored } = await import('../services/buildup.service');
  try {
    await measureStored(buildup, section);
  } catch (e) {
    if (e instanceof AppError && e.code === 'not_calibrated') {
      const cal = await SectionCalibration.findOne({ where: { sectionId: section.id }, order: [['version', 'DESC']] });
      const v = await SectionVelocity.findByPk(section.id);
      await writeSummary(
        {
          buildupId: buildup.id,
          buildupVersion: buildup.version,
          calibrationId: cal?.id ?? null,
          velocityAt: v?.updatedAt ?? null,
          verticalDomain: section.verticalDomain,
          width: section.width,
          height: section.height,
        },
        { status: 'not_calibrated', problem: e.message },
      );
      return;
    }
    // not measurable / too large: measureStored kept the reason in the summary already
    if (e instanceof AppError && (e.code === 'not_measurable' || e.code === 'work_too_large')) return;
    throw e; // busy pool, database trouble: pg-boss retries
  }
}

/** Create the queues (summaries, report batches) and, where this process runs workers and has the app context, work them. */
export async function startSummaryJobs(boss: PgBoss, config: Config): Promise<void> {
  await boss.createQueue(SUMMARY_QUEUE, { name: SUMMARY_QUEUE, policy: 'short' });
  await startBatchJobs(boss, config, () => false); // the register's batch of signed-off reports (report-batch.job.ts)
  if (!config.jobs.runWorkers) return;
  try {
    ctx();
  } catch {
    logger.info('buildup summaries are worked by the app processes (this one has no app context)');
    return;
  }
  await boss.work<SummaryJobData>(SUMMARY_QUEUE, { pollingIntervalSeconds: config.jobs.pollingIntervalSeconds, batchSize: 1 }, async (jobs) => {
    for (const job of jobs) await refreshSummary(job.data.buildupId);
  });
}
