/**
 * Every kind of background job, in one list. `startBackgroundJobs`
 * (pyramid.job.ts) starts the queue and the section pyramids, then walks this
 * list in order in every process: web processes (workers unless
 * CAYLINE_JOB_WORKERS=0) and worker processes (`npm run worker`,
 * server/scripts/worker.ts) alike. A new kind of job appends one entry.
 *
 * `start` creates the kind's queues (always: web processes send jobs even
 * when they work none) and calls `boss.work` only when
 * `ctx.config.jobs.runWorkers`. It may return hooks: `check` runs every
 * `JOB_CHECK_SECONDS` in every process (resume work of dead processes, see
 * liveness.ts), `stop` when the process stops.
 */
import type PgBoss from 'pg-boss';
import type { Sequelize } from 'sequelize';
import type { Config } from '../config';
import type { FileStore } from '../storage/fileStore';
import type { Liveness, JobTimings } from './liveness';
import { startSummaryJobs } from './summary.job';
import { recoverReports, startReportJobs, sweepReportFiles } from './report.job';
import { startDigestJob } from './digest.job';
import { startDepthJobs } from './depth.job';

export interface JobContext {
  boss: PgBoss;
  config: Config;
  sequelize: Sequelize;
  store: FileStore;
  liveness: Liveness;
  timings: JobTimings;
  /** True once the process is stopping (running work gives its rows back). */
  stopping: () => boolean;
}

export interface JobHooks {
  /** Runs every check interval (resume dead processes' work). */
  check?: () => Promise<unknown>;
  stop?: () => void | Promise<void>;
}

export interface JobRegistration {
  /** The pg-boss queues this entry creates (for logs and the contributor guide). */
  queues: string[];
  start: (ctx: JobContext) => Promise<JobHooks | void>;
}

/** In start order. Section pyramids (`section-pyramid`) are started before these by startJobs (queue.ts). */
export const JOB_REGISTRATIONS: JobRegistration[] = [
  // register summaries and the register's report batches (summary.job.ts, report-batch.job.ts)
  { queues: ['buildup-summary', 'register-report-batch'], start: (c) => startSummaryJobs(c.boss, c.config) },
  // buildup report PDFs and crops (report.job.ts)
  {
    queues: ['buildup-report'],
    start: async (c) => {
      const r = await startReportJobs({ boss: c.boss, config: c.config, sequelize: c.sequelize, store: c.store, liveness: c.liveness, timings: c.timings, stopping: c.stopping });
      return { check: async () => { await recoverReports(); await sweepReportFiles(); }, stop: () => r.stop() };
    },
  },
  // depth views of TWT sections (depth.job.ts): column resampling to depth and its tile pyramid
  {
    queues: ['section-depth'],
    start: async (c) => {
      const r = await startDepthJobs({ boss: c.boss, config: c.config, sequelize: c.sequelize, store: c.store, liveness: c.liveness, timings: c.timings, stopping: c.stopping });
      return { check: () => r.check(), stop: () => r.stop() };
    },
  },
  // the daily notification digest (digest.job.ts): scheduled by every process, worked by one
  { queues: ['notification-digest'], start: (c) => startDigestJob(c.boss, c.config) },
];
