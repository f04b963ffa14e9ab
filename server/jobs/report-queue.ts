/**
 * Sending `buildup-report` jobs, apart from the job itself (report.job.ts):
 * the report service queues and wakes report work here without importing the
 * renderer that the job runs. startReportJobs() hands over the queue when it
 * starts and takes it back when it stops.
 */
import type PgBoss from 'pg-boss';
import type { Transaction } from 'sequelize';
import { transactionDb } from './queue';

export const REPORT_QUEUE = 'buildup-report';
export interface ReportJobData {
  reportId: number;
}

interface ReportSender {
  boss: PgBoss;
  expireInSeconds: number;
  /** This process's report workers (empty when it runs none). */
  workerIds: string[];
}
let sender: ReportSender | null = null;

/** Set the queue reports are sent to; `setReportSender(null, s)` clears it only while `s` is current. */
export function setReportSender(next: ReportSender | null, current?: ReportSender) {
  if (next) sender = next;
  else if (!current || sender === current) sender = null;
}

/** Queue a report job inside `transaction`; returns the job id. */
export async function sendReportJob(reportId: number, transaction: Transaction): Promise<string> {
  if (!sender) throw new Error('report job sent before the job queue started');
  const id = await sender.boss.send(REPORT_QUEUE, { reportId } satisfies ReportJobData, {
    db: transactionDb(transaction, 'sendReportJob'),
    retryLimit: 0,
    expireInSeconds: sender.expireInSeconds,
  });
  if (!id) throw new Error('the job queue refused the report job');
  return id;
}

/** Wake this process's report workers (after the sending transaction committed). */
export function nudgeReportWorkers() {
  if (!sender) return;
  for (const id of sender.workerIds) sender.boss.notifyWorker(id);
}
