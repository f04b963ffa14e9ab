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
import { createQueue } from './queue';
import type { Config } from '../config';
import { ctx } from '../context';
import { logger } from '../logger';
import { Buildup, SectionVelocity } from '../models/buildup';
import { Section, SectionCalibration } from '../models/section';
import { AppError } from '../errors';
import { SUMMARY_QUEUE, type SummaryJobData } from './summary-queue';
import { measureStored } from '../services/buildup.service';
import { writeSummary } from '../services/summary-store';
import { startBatchJobs } from './report-batch.job';

/** Measure one buildup's current version and keep its summary. Exported for tests. */
export async function refreshSummary(buildupId: number): Promise<void> {
  const buildup = await Buildup.findByPk(buildupId);
  if (!buildup) return; // deleted meanwhile
  const section = await Section.findByPk(buildup.sectionId);
  if (!section) return;
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
  await createQueue(boss, SUMMARY_QUEUE, { name: SUMMARY_QUEUE, policy: 'short' });
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
