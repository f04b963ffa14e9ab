/**
 * The `section-depth` job: the depth view of a TWT section. It decodes the
 * section's original once (libvips' own uncompressed format on scratch disk),
 * resamples every image column from TWT to depth with the engine's conversion
 * (shared/depth-view: calibration + the velocity model's mode values, and for
 * the `buildup` model the envelope of the measurable buildups), in blocks of
 * DEPTH_BLOCK columns read from the decoded file, into a depth image of the
 * same size, and builds its tile pyramid with the same builder as the TWT
 * tiles (tiles.service.ts). Progress goes to `section_depth_pyramids`.
 *
 * Rebuilt when the velocity model or the calibration changes: the services
 * that change them call `queueDepthBuild` in their transaction (only for
 * sections whose depth view was asked for), which numbers a new build and
 * queues it; the last good build stays on view meanwhile.
 *
 * Crash safety and liveness follow the section pyramids and reports: the job
 * claims its row (`worker_id`), works in a scratch folder tagged with its
 * owner, and moves the finished pyramid to `sections/<key>/depth-<build>` with
 * one rename inside the transaction that marks the row ready; the older
 * build's folder is removed after that commit. A queued/running row whose
 * owner died (or whose job ended) is queued again by the periodic check.
 */
import fsp from 'node:fs/promises';
import path from 'node:path';
import sharp from 'sharp';
import type PgBoss from 'pg-boss';
import { Op, type Sequelize, type Transaction } from 'sequelize';
import type { Config } from '../config';
import { logger } from '../logger';
import { Section, SectionCalibration } from '../models/section';
import { Buildup, SectionVelocity } from '../models/buildup';
import { SectionDepthPyramid } from '../models/depth';
import { removeTree, type FileStore } from '../storage/fileStore';
import { buildPyramid } from '../services/tiles.service';
import { failureText, requeueDeadRows, type Liveness, type JobTimings } from './liveness';
import { createQueue, transactionDb } from './queue';
import { ColumnResampler, depthAxisFor, FILL, sampleSpan, spanAt, type DepthViewBasis } from '../../shared/depth-view/index';
import { DEFAULT_VELOCITY } from '../../shared/schemas/buildups';
import { fromGeometry, isMeasurable, toInterpretationInput, type VelocityModel } from '../../shared/editor/model';
import { segyImageCopy } from './segy-render';

export const DEPTH_QUEUE = 'section-depth';
export interface DepthJobData {
  sectionId: number;
  build: number;
}

/** Columns resampled per block (one block of the decoded image in memory: height × DEPTH_BLOCK × channels bytes). */
export const DEPTH_BLOCK = 256;
const VIPS_HEADER_BYTES = 64;
const PROGRESS_MIN_MS = 300;

/** The file-store prefix of a depth build. */
export const depthPrefix = (storageKey: string, build: number) => `sections/${storageKey}/depth-${build}`;

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

/** What the section's depth conversion depends on now: latest calibration version and velocity-model time. */
export async function currentDepthVersions(sectionId: number, transaction?: Transaction) {
  const cal = (await SectionCalibration.max('version', { where: { sectionId }, transaction })) as number | null;
  const vel = await SectionVelocity.findByPk(sectionId, { transaction });
  return { calibrationVersion: cal ?? null, velocityAt: vel ? vel.updatedAt : null };
}

/**
 * Number and queue a new depth build of `sectionId` inside `transaction`
 * (creating its row when `create`; otherwise a section without a row is left
 * alone, as nobody asked for its depth view). Returns the row, or null.
 */
export async function queueDepthBuild(sectionId: number, transaction: Transaction, opts: { create?: boolean; delaySeconds?: number } = {}): Promise<SectionDepthPyramid | null> {
  let row = await SectionDepthPyramid.findByPk(sectionId, { transaction, lock: transaction.LOCK.UPDATE });
  if (!row && !opts.create) return null;
  if (!deps) throw new Error('depth build queued before the job queue started');
  const versions = await currentDepthVersions(sectionId, transaction);
  if (row?.jobId && (row.status === 'queued' || row.status === 'running')) {
    await deps.boss.cancel(DEPTH_QUEUE, row.jobId, { db: transactionDb(transaction, 'depth view job') }).catch(() => {});
  }
  const build = (row?.build ?? 0) + 1;
  const jobId = await deps.boss.send(DEPTH_QUEUE, { sectionId, build } satisfies DepthJobData, {
    db: transactionDb(transaction, 'depth view job'),
    retryLimit: 0,
    expireInSeconds: deps.config.jobs.expireInSeconds,
    ...(opts.delaySeconds ? { startAfter: opts.delaySeconds } : {}),
  });
  if (!jobId) throw new Error('the job queue refused the depth job');
  const fields = { status: 'queued' as const, progress: 0, build, jobId, workerId: null, attempts: 1, failureReason: null, progressAt: new Date(), ...versions };
  if (row) await row.update(fields, { transaction });
  else row = await SectionDepthPyramid.create({ sectionId, ...fields }, { transaction });
  return row;
}

/**
 * For the services that change what a depth view is made from (velocity
 * model, calibration), inside their transaction: a section whose depth view
 * was asked for gets a new build queued (the last good one stays on view),
 * started at once after the commit.
 */
export async function depthSourcesChanged(sectionId: number, transaction: Transaction): Promise<void> {
  if (await queueDepthBuild(sectionId, transaction)) transaction.afterCommit(() => nudgeDepthWorkers());
}

/** Wake this process's depth workers (after the sending transaction committed). */
export function nudgeDepthWorkers() {
  if (!deps) return;
  for (const id of deps.workerIds) deps.boss.notifyWorker(id);
}

class DepthStopped extends Error {
  constructor(readonly why: 'shutdown' | 'lost') {
    super(why === 'shutdown' ? 'the process is stopping' : 'the depth build was superseded or its section deleted');
  }
}

/** The engine depth context of the section now (the basis of a build). */
export async function depthBasisOf(section: Section): Promise<DepthViewBasis> {
  const cal = await SectionCalibration.findOne({ where: { sectionId: section.id }, order: [['version', 'DESC']] });
  if (!cal) throw new Error('the section has no Ties');
  const vel = await SectionVelocity.findByPk(section.id);
  const velocity = (vel ? vel.model : DEFAULT_VELOCITY) as VelocityModel;
  const calibration = cal.ties.map((t) => ({ px: [t.px[0], t.px[1]] as [number, number], world: [t.world[0], t.world[1]] as [number, number] }));
  const basis: DepthViewBasis = { verticalDomain: 'twt_ms', coordinates: 'pixels', calibration, velocity };
  if (velocity.kind === 'buildup') {
    // as the cursor readout and the Ruler do: the carbonate starts under the measurable buildups' upper envelope
    const editors = (await Buildup.findAll({ where: { sectionId: section.id }, order: [['id', 'ASC']] })).map((b) => fromGeometry({ id: b.id, name: b.name, version: b.version, geometry: b.geometry }));
    const ok = editors.filter((b) => isMeasurable(b, calibration));
    if (ok.length) basis.buildups = toInterpretationInput(ok, { calibrationTies: calibration, verticalDomain: 'twt_ms', velocity }).buildups;
  }
  return basis;
}

/**
 * Resample the decoded image `decoded` (libvips format, width × height ×
 * channels) column block by column block into `outPath` (same format and
 * size), depth rows per `axis`.
 */
export async function resampleToDepth(decoded: string, outPath: string, basis: DepthViewBasis, onProgress: (f: number) => void) {
  const meta = await sharp(decoded).metadata();
  const width = meta.width!;
  const height = meta.height!;
  const ch = meta.channels!;
  const axis = depthAxisFor(basis, width, height);
  const resampler = new ColumnResampler(basis, axis, height);
  const header = Buffer.alloc(VIPS_HEADER_BYTES);
  const src = await fsp.open(decoded, 'r');
  try {
    await src.read(header, 0, VIPS_HEADER_BYTES, 0);
  } finally {
    await src.close();
  }
  const out = await fsp.open(outPath, 'w');
  try {
    await out.write(header, 0, VIPS_HEADER_BYTES, 0); // same width, height, bands and format
    for (let u0 = 0; u0 < width; u0 += DEPTH_BLOCK) {
      const bw = Math.min(DEPTH_BLOCK, width - u0);
      const block = await sharp(decoded)
        .extract({ left: u0, top: 0, width: bw, height })
        .toColourspace(ch === 1 ? 'b-w' : 'srgb') // keep a greyscale image single-channel (sharp would widen it)
        .raw()
        .toBuffer();
      if (block.length !== height * bw * ch) throw new Error('the decoded image has an unexpected layout');
      const res = Buffer.allocUnsafe(axis.height * bw * ch);
      for (let i = 0; i < bw; i++) {
        const rows = resampler.sourceRows(u0 + i);
        for (let j = 0; j < axis.height; j++) {
          const r = rows[j];
          const o = (j * bw + i) * ch;
          if (r !== r) {
            for (let k = 0; k < ch; k++) res[o + k] = FILL;
            continue;
          }
          const span = spanAt(rows, j);
          if (span > 1) {
            // the depth row squeezes several source rows: their overlap-weighted mean (shared/depth-view sampleSpan)
            for (let k = 0; k < ch; k++) res[o + k] = Math.round(sampleSpan(r, span, height, (row) => block[(row * bw + i) * ch + k]));
            continue;
          }
          // linear between pixel centres (r − 0.5), clamped at the ends: shared/depth-view sampleAt
          const f = Math.min(height - 1, Math.max(0, r - 0.5));
          const a = Math.floor(f);
          const b = Math.min(height - 1, a + 1);
          const t = f - a;
          const pa = (a * bw + i) * ch;
          const pb = (b * bw + i) * ch;
          for (let k = 0; k < ch; k++) res[o + k] = Math.round(block[pa + k] * (1 - t) + block[pb + k] * t);
        }
      }
      const rowBytes = bw * ch;
      for (let j = 0; j < axis.height; j++) await out.write(res, j * rowBytes, rowBytes, VIPS_HEADER_BYTES + (j * width + u0) * ch);
      onProgress((u0 + bw) / width);
    }
  } finally {
    await out.close();
  }
  return axis;
}

/** The pg-boss handler: claim, resample, tile, publish atomically; or mark the row failed. */
export async function runDepthJob(job: PgBoss.Job<DepthJobData>) {
  if (!deps) throw new Error('depth job before startDepthJobs()');
  const d = deps;
  const me = d.liveness.id;
  const sectionId = Number(job.data?.sectionId);
  const row = Number.isInteger(sectionId) ? await SectionDepthPyramid.findByPk(sectionId) : null;
  if (!row || row.jobId !== job.id || (row.status !== 'queued' && row.status !== 'running')) return;
  const [claimed] = await SectionDepthPyramid.update(
    { status: 'running', workerId: me, progress: 1, progressAt: new Date() },
    { where: { sectionId, jobId: job.id, status: { [Op.in]: ['queued', 'running'] } } },
  );
  if (!claimed) return;
  const build = row.build;
  const stillMine = { where: { sectionId, jobId: job.id, workerId: me, status: 'running' } };
  const section = await Section.findByPk(sectionId);
  if (!section) return;
  const prefix = `depth-${section.storageKey}`;
  await d.store.removeScratch(prefix).catch(() => {});
  const work = await d.store.scratchDir(prefix);
  let lost = false;
  let lastAt = 0;
  let pending: Promise<unknown> = Promise.resolve();
  const report = (fraction: number) => {
    if (d.stopping()) throw new DepthStopped('shutdown');
    if (lost) throw new DepthStopped('lost');
    const now = Date.now();
    if (now - lastAt < PROGRESS_MIN_MS && fraction < 1) return;
    lastAt = now;
    const pct = Math.min(98, Math.max(1, Math.round(fraction * 98)));
    pending = pending
      .then(() => SectionDepthPyramid.update({ progress: pct, progressAt: new Date() }, stillMine))
      .then(([n]) => {
        if (n === 0) lost = true;
      })
      .catch((err) => logger.warn({ err, sectionId }, 'depth progress failed'));
  };
  try {
    if (section.status !== 'ready') throw new Error('the section has no tiles yet');
    if (section.verticalDomain !== 'twt_ms') throw new Error('the section is already in depth');
    const versions = await currentDepthVersions(sectionId);
    const basis = await depthBasisOf(section);
    // a SEG-Y section has no stored original: its rendered image stands in (segy-render.ts)
    const src = section.sourceKind === 'segy' ? await segyImageCopy(d.store, section, work) : await d.store.localCopy(`sections/${section.storageKey}/original`);
    const decoded = path.join(work, 'decoded.v');
    const depthImage = path.join(work, 'depth.v');
    let axis;
    try {
      const meta = await sharp(src.path, { limitInputPixels: d.config.upload.maxInputPixels }).metadata();
      const grey = meta.space === 'b-w' || meta.space === 'grey16';
      let decoder = sharp(src.path, { limitInputPixels: d.config.upload.maxInputPixels, sequentialRead: true });
      if (meta.hasAlpha) decoder = decoder.flatten({ background: '#ffffff' });
      await decoder.toColourspace(grey ? 'b-w' : 'srgb').toFile(decoded);
    } finally {
      await src.release();
    }
    report(0.1);
    axis = await resampleToDepth(decoded, depthImage, basis, (f) => report(0.1 + 0.4 * f));
    await fsp.rm(decoded, { force: true });
    const out = path.join(work, 'pyramid');
    await fsp.mkdir(out);
    const result = await buildPyramid(depthImage, out, { workDir: work, limitInputPixels: d.config.upload.maxInputPixels, onProgress: (f) => report(0.5 + 0.5 * f) });
    await pending;
    if (lost) throw new DepthStopped('lost');
    const old = await d.sequelize.transaction(async (transaction) => {
      const cur = await SectionDepthPyramid.findByPk(sectionId, { transaction, lock: transaction.LOCK.UPDATE });
      if (!cur || cur.jobId !== job.id || cur.workerId !== me || cur.status !== 'running' || cur.build !== build) return null;
      const dest = depthPrefix(section.storageKey, build);
      await d.store.removePrefix(dest);
      await d.store.importDir(out, dest);
      const before = cur.readyBuild;
      await cur.update(
        {
          status: 'ready',
          progress: 100,
          workerId: null,
          progressAt: new Date(),
          failureReason: null,
          readyBuild: build,
          readyCalibrationVersion: versions.calibrationVersion,
          readyVelocityAt: versions.velocityAt,
          readyBasis: basis,
          readyAxis: axis,
          readyPyramid: {
            tileSize: result.tileSize,
            overlap: result.overlap,
            format: result.format,
            maxLevel: result.maxLevel,
            preview: result.preview,
            thumbnail: result.thumbnail,
          },
        },
        { transaction },
      );
      return before !== null && before !== build ? before : null;
    });
    if (old !== null) await d.store.removePrefix(depthPrefix(section.storageKey, old));
  } catch (err) {
    await pending;
    if (err instanceof DepthStopped && err.why === 'shutdown') {
      await SectionDepthPyramid.update({ workerId: null, status: 'queued', progress: 0, progressAt: new Date() }, stillMine).catch(() => {});
      return;
    }
    if (err instanceof DepthStopped || lost) {
      logger.info({ sectionId }, 'depth build stopped: superseded or its section deleted');
      return;
    }
    logger.warn({ err, sectionId }, 'depth build failed');
    const m = failureText(err, d.config.storageDir);
    await removeTree(work); // before the status, so anyone who sees `failed` also sees no scratch
    await SectionDepthPyramid.update({ status: 'failed', progress: 0, workerId: null, failureReason: `The depth view could not be made: ${m}` }, stillMine).catch(() => {});
  } finally {
    await removeTree(work);
  }
}

/** Queue again the depth builds of dead processes (or fail them after `jobs.maxAttempts`). */
export async function recoverDepthBuilds(): Promise<{ requeued: number[]; failed: number[] }> {
  if (!deps) return { requeued: [], failed: [] };
  const { boss, sequelize, liveness, config, timings } = deps;
  const out = await requeueDeadRows({
    boss,
    queue: DEPTH_QUEUE,
    sequelize,
    liveness,
    timings,
    maxAttempts: config.jobs.maxAttempts,
    rows: await SectionDepthPyramid.findAll({ where: { status: { [Op.in]: ['queued', 'running'] } }, order: [['sectionId', 'ASC']] }),
    keyOf: (r) => r.sectionId,
    lock: (r, transaction) => SectionDepthPyramid.findByPk(r.sectionId, { transaction, lock: transaction.LOCK.UPDATE }),
    send: async (r, transaction) =>
      (await boss.send(DEPTH_QUEUE, { sectionId: r.sectionId, build: r.build } satisfies DepthJobData, {
        db: transactionDb(transaction, 'depth view job'),
        retryLimit: 0,
        expireInSeconds: config.jobs.expireInSeconds,
      })) as string,
    gaveUp: (n) => `Making the depth view was interrupted ${n} times; ask for it again`,
    log: ['resumed a depth build of a dead process', 'sectionId'],
  });
  if (out.requeued.length) nudgeDepthWorkers();
  return out;
}

/** Create the queue, run a worker (unless disabled) and resume dead processes' builds. Registered in registry.ts. */
export async function startDepthJobs(d: Omit<Deps, 'workerIds'>): Promise<{ check(): Promise<unknown>; stop(): void }> {
  await createQueue(d.boss, DEPTH_QUEUE);
  deps = { ...d, workerIds: [] };
  const mine = deps;
  if (d.config.jobs.runWorkers) {
    const id = await d.boss.work<DepthJobData>(DEPTH_QUEUE, { pollingIntervalSeconds: d.config.jobs.pollingIntervalSeconds, batchSize: 1 }, async (jobs) => {
      for (const job of jobs) await runDepthJob(job);
    });
    mine.workerIds.push(id);
  }
  await recoverDepthBuilds().catch((err) => logger.warn({ err }, 'resuming depth builds failed'));
  return {
    check: () => recoverDepthBuilds(),
    stop() {
      if (deps === mine) deps = null;
    },
  };
}
