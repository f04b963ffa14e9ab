/**
 * Sending `buildup-summary` jobs, apart from the job itself (summary.job.ts):
 * services that save buildups queue a refresh here without importing the
 * measuring code that the job runs.
 */
import type PgBoss from 'pg-boss';
import type { Transaction } from 'sequelize';
import { jobQueue, transactionDb } from './queue';

export const SUMMARY_QUEUE = 'buildup-summary';

export interface SummaryJobData {
  buildupId: number;
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
    ...(transaction ? { db: transactionDb(transaction, 'sendSummaryJob') } : {}),
  });
}
