/**
 * The background side of sections: building a section's tile pyramid from its
 * stored original, reporting progress in the row, and recovering work that a
 * stopped or crashed process left behind.
 *
 * Crash safety: the pyramid is written into a private scratch folder and moved
 * into `sections/<key>/pyramid` with one rename inside the transaction that
 * marks the row ready, so the final path never holds half a pyramid.
 */
import path from 'node:path';
import fsp from 'node:fs/promises';
import type PgBoss from 'pg-boss';
import { Op, type Sequelize } from 'sequelize';
import type { Config } from '../config';
import { logger } from '../logger';
import { Section } from '../models/section';
import { fileStoreFor, type FileStore } from '../storage/fileStore';
import { buildPyramid } from '../services/tiles.service';
import { PYRAMID_QUEUE, sendPyramidJob, startJobs, nudgeWorkers, type JobQueue, type PyramidJobData } from './queue';

/** Keys of a section's files in the file store. */
export const sectionKeys = (storageKey: string) => ({
  root: `sections/${storageKey}`,
  original: `sections/${storageKey}/original`,
  pyramid: `sections/${storageKey}/pyramid`,
});

/** Scratch leftovers and unreferenced section folders older than this are swept on boot. */
export const LEFTOVER_AGE_MS = 60 * 60 * 1000;

interface Deps {
  config: Config;
  sequelize: Sequelize;
  store: FileStore;
}
let deps: Deps | null = null;

/** Put a section (already in the transaction) on the queue: new job id, one more attempt, progress 0. */
export async function queuePyramid(section: Section, transaction: import('sequelize').Transaction) {
  const jobId = await sendPyramidJob(section.id, transaction);
  await Section.update(
    { jobId, attempts: section.attempts + 1, status: 'processing', progress: 0, failureReason: null },
    { where: { id: section.id }, transaction },
  );
  return jobId;
}

export { nudgeWorkers };

/** A short, path-free reason for the row. */
function reasonFrom(err: unknown, storageDir: string): string {
  let m = err instanceof Error ? err.message : String(err);
  m = m.split('\n')[0].split(storageDir).join('…').replace(/\/[^\s:'"]+/g, '…');
  return `The image could not be turned into tiles: ${m}`.slice(0, 400);
}

async function removeScratchFor(store: FileStore, storageKey: string) {
  for (const e of await fsp.readdir(store.scratchRoot).catch(() => [] as string[])) {
    if (e.startsWith(`build-${storageKey}-`)) await fsp.rm(path.join(store.scratchRoot, e), { recursive: true, force: true });
  }
}

/** The pg-boss handler: build, then publish atomically, or mark the section failed. */
export async function runPyramidJob(job: PgBoss.Job<PyramidJobData>) {
  if (!deps) throw new Error('pyramid job before startBackgroundJobs()');
  const { config, sequelize, store } = deps;
  const sectionId = Number(job.data?.sectionId);
  const section = Number.isInteger(sectionId) ? await Section.findByPk(sectionId) : null;
  if (!section || section.status !== 'processing' || section.jobId !== job.id) return; // deleted, done, or a stale job
  const keys = sectionKeys(section.storageKey);
  const stillMine = { where: { id: sectionId, status: 'processing', jobId: job.id } };

  await removeScratchFor(store, section.storageKey); // leftovers of an interrupted earlier run
  const work = await store.scratchDir(`build-${section.storageKey}`);
  let lastPct = -1;
  let lastAt = 0;
  let pending: Promise<unknown> = Promise.resolve();
  const report = (fraction: number) => {
    const pct = Math.min(95, 2 + Math.floor(fraction * 93));
    const now = Date.now();
    if (pct === lastPct || now - lastAt < 400) return;
    lastPct = pct;
    lastAt = now;
    pending = pending.then(() => Section.update({ progress: pct }, stillMine)).catch(() => {});
  };
  try {
    await Section.update({ progress: 2 }, stillMine);
    const out = path.join(work, 'pyramid');
    await fsp.mkdir(out);
    const src = await store.localCopy(keys.original);
    let result;
    try {
      result = await buildPyramid(src.path, out, { workDir: work, limitInputPixels: config.upload.maxInputPixels, onProgress: report });
    } finally {
      await src.release();
    }
    await pending;
    await sequelize.transaction(async (transaction) => {
      const row = await Section.findByPk(sectionId, { transaction, lock: transaction.LOCK.UPDATE });
      if (!row || row.status !== 'processing' || row.jobId !== job.id) return; // deleted or superseded meanwhile
      await store.removePrefix(keys.pyramid);
      await store.importDir(out, keys.pyramid);
      await Section.update(
        {
          status: 'ready',
          progress: 100,
          failureReason: null,
          pyramid: {
            tileSize: result.tileSize,
            overlap: result.overlap,
            format: result.format,
            maxLevel: result.maxLevel,
            preview: result.preview,
            thumbnail: result.thumbnail,
          },
        },
        { where: { id: sectionId }, transaction },
      );
    });
  } catch (err) {
    await pending;
    logger.warn({ err, sectionId }, 'pyramid build failed');
    await Section.update({ status: 'failed', progress: 0, failureReason: reasonFrom(err, config.storageDir) }, stillMine);
  } finally {
    await fsp.rm(work, { recursive: true, force: true });
  }
}

/**
 * On boot: a section still `processing` whose job is gone, failed, cancelled
 * or completed is queued again (up to `jobs.maxAttempts` attempts in all) or
 * failed with a clear reason. Jobs still created/retrying/active are left to
 * pg-boss (an active job of a dead process expires and is retried).
 */
export async function recoverSections(boss: PgBoss): Promise<{ requeued: number[]; failed: number[] }> {
  const { config, sequelize } = deps!;
  const out = { requeued: [] as number[], failed: [] as number[] };
  const stuck = await Section.findAll({ where: { status: 'processing' }, order: [['id', 'ASC']] });
  for (const s of stuck) {
    const job = s.jobId ? await boss.getJobById<PyramidJobData>(PYRAMID_QUEUE, s.jobId, { includeArchive: true }).catch(() => null) : null;
    if (job && (job.state === 'created' || job.state === 'retry' || job.state === 'active')) continue;
    if (s.attempts >= config.jobs.maxAttempts) {
      await Section.update(
        {
          status: 'failed',
          progress: 0,
          failureReason: `Building the tiles was interrupted ${s.attempts} times; retry the section or upload the image again`,
        },
        { where: { id: s.id, status: 'processing' } },
      );
      out.failed.push(s.id);
    } else {
      await sequelize.transaction(async (transaction) => {
        const row = await Section.findByPk(s.id, { transaction, lock: transaction.LOCK.UPDATE });
        if (row && row.status === 'processing') await queuePyramid(row, transaction);
      });
      out.requeued.push(s.id);
    }
  }
  if (out.requeued.length || out.failed.length) logger.info(out, 'recovered interrupted sections');
  return out;
}

/** Remove scratch leftovers and section folders no row refers to, when older than LEFTOVER_AGE_MS. */
export async function sweepLeftovers(now = Date.now()) {
  const { store } = deps!;
  for (const e of await store.list('tmp')) {
    if (now - e.modifiedAt.getTime() > LEFTOVER_AGE_MS) await store.removePrefix(`tmp/${e.name}`);
  }
  const folders = (await store.list('sections')).filter((e) => now - e.modifiedAt.getTime() > LEFTOVER_AGE_MS);
  if (!folders.length) return;
  const known = new Set(
    (await Section.findAll({ attributes: ['storageKey'], where: { storageKey: { [Op.in]: folders.map((f) => f.name) } } })).map((s) => s.storageKey),
  );
  for (const f of folders) if (!known.has(f.name)) await store.removePrefix(`sections/${f.name}`);
}

/** Start pg-boss, recover interrupted sections, sweep leftovers, and (unless disabled) run workers. */
export async function startBackgroundJobs(opts: { databaseUrl: string; config: Config; sequelize: Sequelize }): Promise<JobQueue> {
  deps = { config: opts.config, sequelize: opts.sequelize, store: fileStoreFor(opts.config.storageDir) };
  return startJobs({
    ...opts,
    handlers: { pyramid: runPyramidJob },
    onReady: async (boss) => {
      await sweepLeftovers();
      await recoverSections(boss);
    },
  });
}
