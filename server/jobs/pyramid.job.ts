/**
 * The background side of sections: building a section's tile pyramid from its
 * stored original, reporting progress in the row, and recovering work that a
 * stopped or crashed process left behind.
 *
 * Crash safety: the pyramid is written into a private scratch folder and moved
 * into `sections/<key>/pyramid` with one rename inside the transaction that
 * marks the row ready, so the final path never holds half a pyramid.
 *
 * Ownership: the handler claims the section (`worker_id` = this process's
 * job_workers id, see liveness.ts) before building, and its scratch folder is
 * named `build-<storageKey>-<worker id>-<random>`. Every process checks on
 * boot and every `checkEverySeconds` for `processing` sections whose owner is
 * dead (or whose job ended, vanished, or was taken and never claimed): it
 * cancels the stale pg-boss job and queues a fresh one, or fails the section
 * after `jobs.maxAttempts` attempts; scratch of dead owners is removed then
 * too, whatever its age. A build notices that its section was deleted or
 * taken over at its next progress report (at most ~2 s apart) and stops.
 */
import path from 'node:path';
import fsp from 'node:fs/promises';
import type PgBoss from 'pg-boss';
import { Op, type Sequelize, type Transaction } from 'sequelize';
import type { Config } from '../config';
import { logger } from '../logger';
import { Section } from '../models/section';
import { SegyUpload } from '../models/segy';
import { fileStoreFor, removeTree, scratchOwnerOf, type FileStore } from '../storage/fileStore';
import { buildPyramid } from '../services/tiles.service';
import { renderSegyPyramid } from './segy-render';
import {
  PYRAMID_QUEUE,
  cancelPyramidJob,
  sendPyramidJob,
  startJobs,
  nudgeWorkers,
  type JobQueue,
  type PyramidJobData,
} from './queue';
import { Liveness, deadJobReason, jobTimings, type JobTimings, type WorkerRow } from './liveness';
import { JOB_REGISTRATIONS, type JobHooks } from './registry';
import { sectionKeys } from '../storage/keys';


/** The scratch prefix of a section's builds (the store adds `-<owner>-<random>`). */
export const buildScratchPrefix = (storageKey: string) => `build-${storageKey}`;

/**
 * Untagged scratch (no owner id in its name) and unreferenced section folders
 * older than this are swept on boot; tagged scratch of a dead owner goes at
 * once, whatever its age.
 */
export const LEFTOVER_AGE_MS = 60 * 60 * 1000;

/** A progress report is written at most this often, and at least this often while strips come in. */
const PROGRESS_MIN_MS = 400;
const PROGRESS_MAX_MS = 2000;

interface Deps {
  config: Config;
  sequelize: Sequelize;
  store: FileStore;
  liveness: Liveness;
  timings: JobTimings;
  /** Set when the process stops: running builds give their section back. */
  stopping: boolean;
}
let deps: Deps | null = null;

/** Put a section (already in the transaction) on the queue: new job id, one more attempt, progress 0, no owner yet. */
export async function queuePyramid(section: Section, transaction: Transaction) {
  const jobId = await sendPyramidJob(section.id, transaction);
  await Section.update(
    { jobId, attempts: section.attempts + 1, status: 'processing', progress: 0, failureReason: null, workerId: null, progressAt: new Date() },
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

/** Thrown from the progress callback to stop a build (buildPyramid rethrows it after closing its files). */
class BuildStopped extends Error {
  constructor(readonly why: 'shutdown' | 'lost') {
    super(why === 'shutdown' ? 'the process is stopping' : 'the section was deleted or its build taken over');
  }
}

/** The pg-boss handler: claim, build, then publish atomically, or mark the section failed. */
export async function runPyramidJob(job: PgBoss.Job<PyramidJobData>) {
  if (!deps) throw new Error('pyramid job before startBackgroundJobs()');
  const d = deps;
  const { config, sequelize, store } = d;
  const me = d.liveness.id;
  const sectionId = Number(job.data?.sectionId);
  const section = Number.isInteger(sectionId) ? await Section.findByPk(sectionId) : null;
  if (!section || section.status !== 'processing' || section.jobId !== job.id) return; // deleted, done, or a stale job
  const [claimed] = await Section.update(
    { workerId: me, progress: 2, progressAt: new Date() },
    { where: { id: sectionId, status: 'processing', jobId: job.id } },
  );
  if (!claimed) return;
  const keys = sectionKeys(section.storageKey);
  const stillMine = { where: { id: sectionId, status: 'processing', jobId: job.id, workerId: me } };

  await store.removeScratch(buildScratchPrefix(section.storageKey)); // leftovers of an interrupted earlier run
  const work = await store.scratchDir(buildScratchPrefix(section.storageKey));
  let lost = false;
  let lastPct = 2;
  let lastAt = Date.now();
  let pending: Promise<unknown> = Promise.resolve();
  const report = (fraction: number) => {
    if (d.stopping) throw new BuildStopped('shutdown');
    if (lost) throw new BuildStopped('lost');
    const pct = Math.min(95, 2 + Math.floor(fraction * 93));
    const now = Date.now();
    if (!((pct !== lastPct && now - lastAt >= PROGRESS_MIN_MS) || now - lastAt >= PROGRESS_MAX_MS)) return;
    lastPct = pct;
    lastAt = now;
    pending = pending
      .then(() => Section.update({ progress: pct, progressAt: new Date() }, stillMine))
      .then(([n]) => {
        if (n === 0) lost = true; // deleted, retried or resumed elsewhere meanwhile
      })
      .catch((err) => logger.warn({ err, sectionId }, 'progress report failed'));
  };
  try {
    const out = path.join(work, 'pyramid');
    await fsp.mkdir(out);
    let result;
    if (section.sourceKind === 'segy') result = await renderSegyPyramid(store, section, out, report); // from stored amplitudes (segy-render.ts)
    else {
      const src = await store.localCopy(keys.original);
      try {
        result = await buildPyramid(src.path, out, { workDir: work, limitInputPixels: config.upload.maxInputPixels, onProgress: report });
      } finally {
        await src.release();
      }
    }
    await pending;
    await sequelize.transaction(async (transaction) => {
      const row = await Section.findByPk(sectionId, { transaction, lock: transaction.LOCK.UPDATE });
      if (!row || row.status !== 'processing' || row.jobId !== job.id || row.workerId !== me) return; // deleted or superseded meanwhile
      await store.removePrefix(keys.pyramid);
      await store.importDir(out, keys.pyramid);
      await Section.update(
        {
          status: 'ready',
          progress: 100,
          failureReason: null,
          workerId: null,
          progressAt: new Date(),
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
    if (err instanceof BuildStopped && err.why === 'shutdown') {
      // give the section back; pg-boss records the failure and runs the same job again after its retry delay
      await Section.update({ workerId: null, progress: 0, progressAt: new Date() }, stillMine).catch(() => {});
      throw err;
    }
    // a deleted section's scratch vanishes under the build, which may fail on that before its next report
    if (err instanceof BuildStopped || lost || (await Section.count(stillMine).catch(() => 1)) === 0) {
      logger.info({ sectionId }, 'pyramid build stopped: the section was deleted or its build taken over');
      return;
    }
    logger.warn({ err, sectionId }, 'pyramid build failed');
    await removeTree(work); // before the status, so anyone who sees `failed` also sees no scratch
    await Section.update({ status: 'failed', progress: 0, workerId: null, failureReason: reasonFrom(err, config.storageDir) }, stillMine);
  } finally {
    await removeTree(work);
  }
}

// ---- liveness of builds ------------------------------------------------------------

/** Why a `processing` section has no live build, or null when it has one (or is waiting in the queue); see `deadJobReason`. */
export async function deadBuildReason(
  boss: PgBoss,
  s: Pick<Section, 'workerId' | 'jobId'>,
  owners: Map<string, WorkerRow>,
): Promise<'owner_dead' | 'job_ended' | 'unclaimed' | null> {
  return deadJobReason(boss, PYRAMID_QUEUE, s, owners, deps!.liveness, deps!.timings);
}

/**
 * For `POST /retry` of a `processing` section: why it may be retried (no live
 * build, or no progress for `stallSeconds`), or null while a live process is
 * building it or it waits in the queue.
 */
export async function stuckReason(s: Section): Promise<string | null> {
  if (!deps) return null;
  const boss = jobQueueOrNull();
  if (!boss) return null;
  const owners = await deps.liveness.workers(s.workerId ? [s.workerId] : []);
  const dead = await deadBuildReason(boss, s, owners);
  if (dead) return dead;
  const since = s.progressAt ? Date.now() - new Date(s.progressAt).getTime() : 0;
  return since > deps.timings.stallSeconds * 1000 ? 'stalled' : null;
}

function jobQueueOrNull(): PgBoss | null {
  return queueRef;
}
let queueRef: PgBoss | null = null;

/**
 * Resume builds of dead processes: a `processing` section with a dead owner,
 * an ended or vanished job, or an unclaimed taken job gets its stale job
 * cancelled and a fresh one queued (up to `jobs.maxAttempts` attempts in all),
 * or is failed with a clear reason. Each section is decided under its row lock
 * and only if nothing changed meanwhile, so several processes may check at once.
 */
export async function recoverSections(boss: PgBoss): Promise<{ requeued: number[]; failed: number[] }> {
  const { config, sequelize, liveness } = deps!;
  const out = { requeued: [] as number[], failed: [] as number[] };
  const stuck = await Section.findAll({ where: { status: 'processing' }, order: [['id', 'ASC']] });
  if (!stuck.length) return out;
  const owners = await liveness.workers(stuck.flatMap((s) => (s.workerId ? [s.workerId] : [])));
  for (const s of stuck) {
    const why = await deadBuildReason(boss, s, owners);
    if (!why) continue;
    const outcome = await sequelize.transaction(async (transaction) => {
      const row = await Section.findByPk(s.id, { transaction, lock: transaction.LOCK.UPDATE });
      if (!row || row.status !== 'processing' || row.jobId !== s.jobId || row.workerId !== s.workerId) return null; // someone acted meanwhile
      await cancelPyramidJob(row.jobId, transaction);
      if (row.attempts >= config.jobs.maxAttempts) {
        await Section.update(
          {
            status: 'failed',
            progress: 0,
            workerId: null,
            failureReason: `Building the tiles was interrupted ${row.attempts} times; retry the section or upload the image again`,
          },
          { where: { id: row.id }, transaction },
        );
        return 'failed' as const;
      }
      await queuePyramid(row, transaction);
      return 'requeued' as const;
    });
    if (outcome) out[outcome].push(s.id);
    if (outcome) logger.info({ sectionId: s.id, why, outcome, deadOwner: s.workerId }, 'resumed a build of a dead process');
  }
  if (out.requeued.length) nudgeWorkers();
  return out;
}

/**
 * Scratch folders (`tmp/`): one tagged with a dead owner's id goes whatever
 * its age; one tagged with a live owner's id (this process included) stays;
 * an untagged one goes when older than LEFTOVER_AGE_MS.
 */
export async function sweepScratch(now = Date.now()) {
  const { store, liveness } = deps!;
  const entries = await store.listScratch(); // this machine's own disk, whichever driver keeps the files
  const owners = await liveness.workers(entries.flatMap((e) => scratchOwnerOf(e.name) ?? []));
  for (const e of entries) {
    const owner = scratchOwnerOf(e.name);
    const dead = owner ? !liveness.isAlive(owner, owners.get(owner)) : now - e.modifiedAt.getTime() > LEFTOVER_AGE_MS;
    if (dead) await removeTree(path.join(store.scratchRoot, e.name));
  }
}

/** Boot sweep: scratch (see sweepScratch) and section folders no row refers to, when older than LEFTOVER_AGE_MS. */
export async function sweepLeftovers(now = Date.now()) {
  const { store } = deps!;
  await sweepScratch(now);
  await sweepSegyLeftovers(now);
  const folders = (await store.list('sections')).filter((e) => now - e.modifiedAt.getTime() > LEFTOVER_AGE_MS);
  if (!folders.length) return;
  const known = new Set(
    (await Section.findAll({ attributes: ['storageKey'], where: { storageKey: { [Op.in]: folders.map((f) => f.name) } } })).map((s) => s.storageKey),
  );
  for (const f of folders) if (!known.has(f.name)) await store.removePrefix(`sections/${f.name}`);
}

/** SEG-Y upload folders (`segy/<key>`) no row refers to, when older than LEFTOVER_AGE_MS (a crash between the move and the commit). */
async function sweepSegyLeftovers(now: number) {
  const { store } = deps!;
  const folders = (await store.list('segy')).filter((e) => now - e.modifiedAt.getTime() > LEFTOVER_AGE_MS);
  if (!folders.length) return;
  const known = new Set((await SegyUpload.findAll({ attributes: ['storageKey'], where: { storageKey: { [Op.in]: folders.map((f) => f.name) } } })).map((u) => u.storageKey));
  for (const f of folders) if (!known.has(f.name)) await store.removePrefix(`segy/${f.name}`);
}

/**
 * Register this process (heartbeat), start pg-boss, sweep leftovers and
 * resume dead processes' builds, run workers (unless disabled), and repeat the
 * check every `checkEverySeconds`.
 *
 * Timing (defaults): a restart on the same host finds the dead owner by its
 * pid at boot and queues the build again at once; on another host the owner's
 * heartbeat (every 10 s) is stale after 30 s and the next check (every 15 s)
 * resumes it, so within 45 s of the death.
 */
export async function startBackgroundJobs(opts: { databaseUrl: string; config: Config; sequelize: Sequelize }): Promise<JobQueue> {
  const timings = jobTimings(opts.config.jobs);
  const store = fileStoreFor(opts.config.storageDir);
  const liveness = new Liveness(opts.sequelize, timings, opts.config.jobs.runWorkers);
  await liveness.start();
  store.setScratchOwner(liveness.id);
  const mine: Deps = { config: opts.config, sequelize: opts.sequelize, store, liveness, timings, stopping: false };
  deps = mine;
  let timer: NodeJS.Timeout | null = null;
  let queue: JobQueue;
  const hooks: JobHooks[] = [];
  try {
    queue = await startJobs({
      ...opts,
      handlers: { pyramid: runPyramidJob },
      onReady: async (boss) => {
        queueRef = boss;
        await sweepLeftovers();
        await recoverSections(boss);
        // every other kind of job (registry.ts) shares the queue, the liveness and the sweep
        const ctx = { boss, config: opts.config, sequelize: opts.sequelize, store, liveness, timings, stopping: () => mine.stopping };
        for (const r of JOB_REGISTRATIONS) {
          const h = await r.start(ctx);
          if (h) hooks.push(h);
        }
      },
    });
  } catch (err) {
    await liveness.stop();
    throw err;
  }
  let checking = false;
  timer = setInterval(() => {
    if (checking || mine.stopping) return;
    checking = true;
    (async () => {
      await recoverSections(queue.boss);
      for (const h of hooks) await h.check?.();
      await sweepScratch();
      await liveness.prune();
    })()
      .catch((err) => logger.warn({ err }, 'checking for builds of dead processes failed'))
      .finally(() => (checking = false));
  }, timings.checkEverySeconds * 1000);
  timer.unref();
  return {
    boss: queue.boss,
    async stop() {
      if (timer) clearInterval(timer);
      mine.stopping = true; // running builds stop at their next progress report and give their section back
      await queue.stop();
      for (const h of hooks) await h.stop?.();
      await liveness.stop();
      if (deps === mine) {
        store.setScratchOwner(null);
        queueRef = null;
      }
    },
  };
}
