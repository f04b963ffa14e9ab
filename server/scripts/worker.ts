/**
 * A background worker process without HTTP: `DATABASE_URL=… npm run worker`.
 * Works every queue: section tile pyramids, then each entry of
 * JOB_REGISTRATIONS (server/jobs/registry.ts: register summaries and report
 * batches, buildup reports, the daily notification digest, …) from the shared
 * pg-boss queue; run several next to web processes started with
 * CAYLINE_JOB_WORKERS=0. It needs the same file store as the web processes:
 * the same bucket (CAYLINE_STORE=s3, server/storage/fileStore.ts) or, with the
 * local driver, the same storage folder (CAYLINE_STORAGE). Its scratch stays on
 * its own disk (`<CAYLINE_STORAGE>/tmp`).
 *
 * Once it works the queues it prints `working the job queues` on stdout.
 * It registers in `job_workers` and refreshes its heartbeat every 10 s; should
 * it die (even by SIGKILL), the build it owned is resumed by any other Cayline
 * process: at once when one starts on the same host (the pid is gone), else
 * within 45 s (heartbeat stale after 30 s, checked every 15 s). SIGTERM/SIGINT
 * stop it gracefully: a running build gives its section back and pg-boss runs
 * the same job again after its retry delay (10 s).
 */
import { loadConfig } from '../config';
import { createSequelize } from '../db/sequelize';
import { migrate } from '../db/migrate';
import { initModels } from '../models/index';
import { startBackgroundJobs } from '../jobs/pyramid.job';
import { logger } from '../logger';
import { setContext } from '../context';
import { createMailer } from '../mail/mailer';
import { fileStoreFor } from '../storage/fileStore';

async function main() {
  const databaseUrl = process.env.DATABASE_URL;
  if (!databaseUrl) throw new Error('DATABASE_URL: set it to the PostgreSQL server the web processes use');
  const base = loadConfig();
  const config = { ...base, jobs: { ...base.jobs, runWorkers: true } };
  const sequelize = createSequelize(databaseUrl);
  await sequelize.authenticate();
  await migrate(sequelize);
  initModels(sequelize);
  // the services jobs call (register summaries, reports) read the database and config from the app context
  setContext({ config, sequelize, mailer: createMailer({ host: process.env.SMTP_HOST ?? config.mail.host, port: config.mail.port, from: config.mail.from }) });
  const jobs = await startBackgroundJobs({ databaseUrl, config, sequelize });
  logger.info({ storage: config.storageDir, store: fileStoreFor(config.storageDir).driver }, 'Cayline worker up');
  // one plain line whatever LOG_LEVEL says, for supervisors and tests: the queues are being worked from now on
  console.log('working the job queues');
  const stop = async () => {
    await jobs.stop();
    await sequelize.close();
    process.exit(0);
  };
  process.on('SIGINT', () => void stop());
  process.on('SIGTERM', () => void stop());
}

main().catch((err) => {
  console.error(err);
  process.exit(1);
});
