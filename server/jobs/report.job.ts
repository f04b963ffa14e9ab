/**
 * The `buildup-report` job: makes a buildup's report PDF and the marked-up
 * crop (PNG, SVG) off the request path, with progress in its
 * `buildup_reports` row, and keeps them under `reports/<cache key>/` until
 * something the report shows changes (the key changes; rows of the same
 * buildup and choices under an older key are removed with their files).
 *
 * Crash safety and liveness follow the pyramid builds (pyramid.job.ts): the
 * job claims its row (`worker_id` = this process's job_workers id), writes
 * into a scratch folder tagged with that id, and moves the finished folder
 * into place with one rename inside the transaction that marks the row
 * ready, so a crash never leaves half a file in the store. On boot and every
 * check interval, a `queued`/`running` row whose owner is dead or whose job
 * ended or vanished is queued again (up to `jobs.maxAttempts`, then failed).
 */
import fsp from 'node:fs/promises';
import path from 'node:path';
import type PgBoss from 'pg-boss';
import { createQueue } from './queue';
import { Op, type Sequelize } from 'sequelize';
import type { Config } from '../config';
import { logger } from '../logger';
import { Buildup } from '../models/buildup';
import { Section } from '../models/section';
import { BuildupReportRow } from '../models/report';
import { removeTree, type FileStore } from '../storage/fileStore';
import { failureText, requeueDeadRows, type Liveness, type JobTimings } from './liveness';
import { REPORT_QUEUE, nudgeReportWorkers, sendReportJob, setReportSender, type ReportJobData } from './report-queue';

export { REPORT_QUEUE } from './report-queue';


interface Deps {
  boss: PgBoss;
  config: Config;
  sequelize: Sequelize;
  store: FileStore;
  liveness: Liveness;
  timings: JobTimings;
  stopping: () => boolean;
  workerIds: string[];
}
let deps: Deps | null = null;

class ReportStopped extends Error {
  constructor(readonly why: 'shutdown' | 'lost') {
    super(why === 'shutdown' ? 'the process is stopping' : 'the report was removed or taken over');
  }
}

const PROGRESS_MIN_MS = 300;

/** The pg-boss handler: claim, render into scratch, publish atomically, or mark the row failed. */
export async function runReportJob(job: PgBoss.Job<ReportJobData>) {
  if (!deps) throw new Error('report job before startReportJobs()');
  const d = deps;
  const me = d.liveness.id;
  const reportId = Number(job.data?.reportId);
  const row = Number.isInteger(reportId) ? await BuildupReportRow.findByPk(reportId) : null;
  if (!row || row.jobId !== job.id || (row.status !== 'queued' && row.status !== 'running')) return;
  const [claimed] = await BuildupReportRow.update(
    { status: 'running', workerId: me, progress: 2, progressAt: new Date() },
    { where: { id: reportId, jobId: job.id, status: { [Op.in]: ['queued', 'running'] } } },
  );
  if (!claimed) return;
  const stillMine = { where: { id: reportId, jobId: job.id, workerId: me, status: 'running' } };
  const scratchPrefix = `report-${row.cacheKey.slice(0, 24)}`;
  const work = await d.store.scratchDir(scratchPrefix);
  let lost = false;
  let lastAt = 0;
  let pending: Promise<unknown> = Promise.resolve();
  const report = (fraction: number) => {
    if (d.stopping()) throw new ReportStopped('shutdown');
    if (lost) throw new ReportStopped('lost');
    const now = Date.now();
    if (now - lastAt < PROGRESS_MIN_MS && fraction < 1) return;
    lastAt = now;
    const pct = Math.min(98, Math.max(2, Math.round(fraction * 98)));
    pending = pending
      .then(() => BuildupReportRow.update({ progress: pct, progressAt: new Date() }, stillMine))
      .then(([n]) => {
        if (n === 0) lost = true;
      })
      .catch((err) => logger.warn({ err, reportId }, 'report progress failed'));
  };
  try {
    const buildup = await Buildup.findByPk(row.buildupId);
    const section = buildup ? await Section.findByPk(buildup.sectionId) : null;
    if (!buildup || !section) throw new ReportStopped('lost');
    const out = path.join(work, 'files');
    await fsp.mkdir(out);
    const { renderReportFiles } = await import('../reports/render');
    const result = await renderReportFiles({ buildup, section, row, store: d.store, outDir: out, onProgress: report });
    await pending;
    if (lost) throw new ReportStopped('lost');
    const folder = `reports/${row.cacheKey}`;
    const stale = await d.sequelize.transaction(async (transaction) => {
      const cur = await BuildupReportRow.findByPk(reportId, { transaction, lock: transaction.LOCK.UPDATE });
      if (!cur || cur.jobId !== job.id || cur.workerId !== me || cur.status !== 'running') return null;
      await d.store.removePrefix(folder);
      await d.store.importDir(out, folder);
      await cur.update({ status: 'ready', progress: 100, workerId: null, progressAt: new Date(), pdfBytes: result.pdfBytes, pages: result.pages, failureReason: null }, { transaction });
      // older reports of this buildup with the same choices are out of date now
      const older = await BuildupReportRow.findAll({
        where: { buildupId: cur.buildupId, paper: cur.paper, unit: cur.unit, stretch: cur.stretch, id: { [Op.ne]: cur.id }, status: { [Op.in]: ['ready', 'failed'] } },
        transaction,
      });
      await BuildupReportRow.destroy({ where: { id: older.map((o) => o.id) }, transaction });
      return older.map((o) => o.cacheKey);
    });
    for (const key of stale ?? []) await d.store.removePrefix(`reports/${key}`);
  } catch (err) {
    await pending;
    if (err instanceof ReportStopped && err.why === 'shutdown') {
      // give it back: the next process's recovery queues it again
      await BuildupReportRow.update({ workerId: null, status: 'queued', progress: 0, progressAt: new Date() }, stillMine).catch(() => {});
      return;
    }
    if (err instanceof ReportStopped || lost) {
      logger.info({ reportId }, 'report stopped: its row was removed or taken over');
      return;
    }
    logger.warn({ err, reportId }, 'report failed');
    const m = failureText(err, d.config.storageDir);
    await removeTree(work); // before the status, so anyone who sees `failed` also sees no scratch
    await BuildupReportRow.update({ status: 'failed', progress: 0, workerId: null, failureReason: `The report could not be made: ${m}` }, stillMine).catch(() => {});
  } finally {
    await removeTree(work);
  }
}

/** Queue again the reports of dead processes (or fail them after `jobs.maxAttempts`). */
export async function recoverReports(): Promise<{ requeued: number[]; failed: number[] }> {
  if (!deps) return { requeued: [], failed: [] };
  const { boss, sequelize, liveness, config, timings } = deps;
  const out = await requeueDeadRows({
    boss,
    queue: REPORT_QUEUE,
    sequelize,
    liveness,
    timings,
    maxAttempts: config.jobs.maxAttempts,
    rows: await BuildupReportRow.findAll({ where: { status: { [Op.in]: ['queued', 'running'] } }, order: [['id', 'ASC']] }),
    keyOf: (r) => r.id,
    lock: (r, transaction) => BuildupReportRow.findByPk(r.id, { transaction, lock: transaction.LOCK.UPDATE }),
    send: (r, transaction) => sendReportJob(r.id, transaction),
    gaveUp: (n) => `Making the report was interrupted ${n} times; ask for it again`,
    log: ['resumed a report of a dead process', 'reportId'],
  });
  if (out.requeued.length) nudgeReportWorkers();
  return out;
}

/** Report folders no row refers to (a deleted buildup's, whose rows went with it) go after this long. */
export const REPORT_LEFTOVER_AGE_MS = 60 * 60 * 1000;

/** Remove `reports/<key>` folders without a row, when older than REPORT_LEFTOVER_AGE_MS (a folder being published has its row). */
export async function sweepReportFolders(now = Date.now()): Promise<string[]> {
  if (!deps) return [];
  const { store } = deps;
  const old = (await store.list('reports')).filter((e) => now - e.modifiedAt.getTime() > REPORT_LEFTOVER_AGE_MS);
  if (!old.length) return [];
  const known = new Set((await BuildupReportRow.findAll({ attributes: ['cacheKey'], where: { cacheKey: { [Op.in]: old.map((e) => e.name) } } })).map((r) => r.cacheKey));
  const gone: string[] = [];
  for (const e of old) {
    if (known.has(e.name) || !/^[0-9a-f]{64}$/.test(e.name)) continue;
    await store.removePrefix(`reports/${e.name}`);
    gone.push(e.name);
  }
  return gone;
}

/** Batch archives (`report-batches/<job id>.zip`) are kept this long, then removed (a download answers 410 batch_gone). */
export const BATCH_KEEP_MS = 24 * 60 * 60 * 1000;

/** Remove batch archives older than BATCH_KEEP_MS. */
export async function sweepBatchArchives(now = Date.now()): Promise<string[]> {
  if (!deps) return [];
  const { store } = deps;
  const gone: string[] = [];
  for (const e of await store.list('report-batches')) {
    if (now - e.modifiedAt.getTime() <= BATCH_KEEP_MS || !/^[0-9a-f-]{36}\.zip$/.test(e.name)) continue;
    await store.removePrefix(`report-batches/${e.name}`);
    gone.push(e.name);
  }
  return gone;
}

/** How often the periodic check also sweeps report folders and batch archives (listing the store is not free on S3). */
export const REPORT_SWEEP_EVERY_MS = 60 * 60 * 1000;
let lastSweepAt = 0;

/** Both sweeps, at most once per REPORT_SWEEP_EVERY_MS (on boot, then from the periodic check); `force` ignores the interval. */
export async function sweepReportFiles(now = Date.now(), force = false): Promise<{ folders: string[]; archives: string[] }> {
  if (!force && now - lastSweepAt < REPORT_SWEEP_EVERY_MS) return { folders: [], archives: [] };
  lastSweepAt = now;
  const folders = await sweepReportFolders(now).catch((err) => (logger.warn({ err }, 'sweeping report folders failed'), [] as string[]));
  const archives = await sweepBatchArchives(now).catch((err) => (logger.warn({ err }, 'sweeping report batch archives failed'), [] as string[]));
  return { folders, archives };
}

/** Create the queue, run a worker (unless disabled) and resume dead processes' reports. Called by startBackgroundJobs. */
export async function startReportJobs(d: Omit<Deps, 'workerIds'>): Promise<{ stop(): void }> {
  await createQueue(d.boss, REPORT_QUEUE);
  deps = { ...d, workerIds: [] };
  const mine = deps;
  const sender = { boss: d.boss, expireInSeconds: d.config.jobs.expireInSeconds, workerIds: mine.workerIds };
  setReportSender(sender);
  if (d.config.jobs.runWorkers) {
    const id = await d.boss.work<ReportJobData>(REPORT_QUEUE, { pollingIntervalSeconds: d.config.jobs.pollingIntervalSeconds, batchSize: 1 }, async (jobs) => {
      for (const job of jobs) await runReportJob(job);
    });
    mine.workerIds.push(id);
  }
  await recoverReports().catch((err) => logger.warn({ err }, 'resuming reports failed'));
  await sweepReportFiles(Date.now(), true);
  return {
    stop() {
      if (deps === mine) deps = null;
      setReportSender(null, sender);
    },
  };
}
