/**
 * The daily notification digest as a pg-boss schedule (cron `config.notify.digestCron`,
 * UTC) on the queue `notification-digest`. pg-boss puts one job per tick in the
 * queue whichever process's clock fires, and one worker takes it, so several
 * web processes still send one digest. `runDigest()` runs it at once.
 */
import type PgBoss from 'pg-boss';
import { createQueue } from './queue';
import type { Config } from '../config';
import { runDigest } from '../services/notify.service';
import { logger } from '../logger';

export const DIGEST_QUEUE = 'notification-digest';

export async function startDigestJob(boss: PgBoss, config: Config): Promise<void> {
  await createQueue(boss, DIGEST_QUEUE);
  await boss.schedule(DIGEST_QUEUE, config.notify.digestCron, {}, { tz: 'UTC' });
  if (!config.jobs.runWorkers) return;
  await boss.work(DIGEST_QUEUE, { pollingIntervalSeconds: 30, batchSize: 1 }, async () => {
    const r = await runDigest();
    logger.info(r, 'notification digest sent');
  });
}
