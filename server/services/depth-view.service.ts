/**
 * The depth view of a TWT section: its state, asking for it (queues the
 * `section-depth` job, jobs/depth.job.ts), and its tiles. Any member of the
 * project may look at and ask for the depth view (it only derives pictures
 * from the section); the velocity and calibration services queue a rebuild in
 * their own transaction when they change what it was made from.
 */
import { ctx } from '../context';
import { AppError, notFound } from '../errors';
import { Section } from '../models/section';
import { SectionVelocity } from '../models/buildup';
import { logger } from '../logger';
import { DEFAULT_VELOCITY } from '../../shared/schemas/buildups';
import { SectionDepthPyramid } from '../models/depth';
import type { Actor } from './project.service';
import { sectionForViewer } from './section-access';
import { audit } from './audit.service';
import { pyramidLevels, tilesDescriptor, TILE_EXT } from './tiles.service';
import { fileStoreFor, type StoredObject } from '../storage/fileStore';
import { currentDepthVersions, depthBasisOf, depthPrefix, nudgeDepthWorkers, queueDepthBuild } from '../jobs/depth.job';
import { stableJson } from '../measure/cache';
import type { DepthViewState } from '../../shared/schemas/depth-view';

const store = () => fileStoreFor(ctx().config.storageDir);

/** Why the section has no depth view, or null when it can have one. */
async function unavailableReason(s: Section): Promise<{ code: string; message: string } | null> {
  if (s.verticalDomain !== 'twt_ms') return { code: 'already_depth', message: 'verticalDomain: the section is already in depth; the depth view is for TWT sections' };
  if (s.status !== 'ready' || !s.pyramid) return { code: 'section_not_ready', message: `The section's tiles are not ready (status ${s.status})` };
  const { calibrationVersion } = await currentDepthVersions(s.id);
  if (calibrationVersion === null) return { code: 'not_calibrated', message: 'calibration: the section has no Ties yet; calibrate it before asking for the depth view' };
  return null;
}

const sameTime = (a: Date | null, b: Date | null) => (a === null ? b === null : b !== null && a.getTime() === b.getTime());

async function stateOf(s: Section, row: SectionDepthPyramid | null): Promise<DepthViewState> {
  const why = await unavailableReason(s);
  const base = { sectionId: s.id, available: why === null, unavailableReason: why?.message ?? null };
  if (!row) return { ...base, status: 'none', progress: 0, failureReason: null, stale: false, ready: null };
  const now = await currentDepthVersions(s.id);
  const hasReady = row.readyBuild !== null && row.readyAxis && row.readyBasis && row.readyPyramid;
  const stale = !!hasReady && (row.readyCalibrationVersion !== now.calibrationVersion || !sameTime(row.readyVelocityAt, now.velocityAt));
  let ready: DepthViewState['ready'] = null;
  if (hasReady) {
    const b = row.readyBuild!;
    const t = tilesDescriptor(s.id, s.width, s.height, row.readyPyramid!.tileSize, row.readyPyramid!.overlap);
    t.urlTemplate = `/api/sections/${s.id}/depth/${b}/tiles/{z}/{x}_{y}.${TILE_EXT}`;
    ready = {
      build: b,
      tiles: t,
      previewUrl: `/api/sections/${s.id}/depth/${b}/preview`,
      axis: row.readyAxis!,
      basis: row.readyBasis!,
      calibrationVersion: row.readyCalibrationVersion,
      velocityAt: row.readyVelocityAt ? row.readyVelocityAt.toISOString() : null,
    };
  }
  return { ...base, status: row.status, progress: row.status === 'ready' ? 100 : row.progress, failureReason: row.failureReason, stale, ready };
}

export async function getDepthView(actor: Actor, sectionId: number): Promise<DepthViewState> {
  const s = await sectionForViewer(actor, sectionId);
  return stateOf(s, await SectionDepthPyramid.findByPk(s.id));
}

/**
 * Ask for the depth view: queues a build unless the stored one is current
 * (same calibration and velocity model, and for the `buildup` model the same
 * traced buildups) or one for the current calibration and velocity model is
 * already queued or running. `queued` says whether a build was queued (202)
 * or not (200).
 */
export async function requestDepthView(actor: Actor, sectionId: number): Promise<{ queued: boolean; state: DepthViewState }> {
  const s = await sectionForViewer(actor, sectionId);
  const why = await unavailableReason(s);
  if (why) throw new AppError(409, why.code, why.message);
  const queued = await ctx().sequelize.transaction(async (transaction) => {
    const row = await SectionDepthPyramid.findByPk(s.id, { transaction, lock: transaction.LOCK.UPDATE });
    const now = await currentDepthVersions(s.id, transaction);
    if (row) {
      const current = (cv: number | null, va: Date | null) => cv === now.calibrationVersion && sameTime(va, now.velocityAt);
      if ((row.status === 'queued' || row.status === 'running') && current(row.calibrationVersion, row.velocityAt)) return false;
      // ready and current; for the buildup model also with the same buildups' envelope (re-traced buildups: build again)
      if (row.status === 'ready' && current(row.readyCalibrationVersion, row.readyVelocityAt) && stableJson(await depthBasisOf(s)) === stableJson(row.readyBasis)) return false;
    }
    const next = await queueDepthBuild(s.id, transaction, { create: true });
    await audit(actor.id, 'section.depth_view', 'section', s.id, { build: next!.build, calibrationVersion: now.calibrationVersion }, transaction);
    return true;
  });
  if (queued) nudgeDepthWorkers();
  return { queued, state: await stateOf(s, await SectionDepthPyramid.findByPk(s.id)) };
}

/** Seconds a rebuild after a buildup save waits, so a run of autosaves makes one build (each save replaces the queued one). */
export const BUILDUP_REBUILD_DELAY_SECONDS = 5;

/**
 * After a buildup of `sectionId` was saved or deleted (called after commit;
 * never throws). With the `buildup` velocity model the carbonate starts under
 * the measurable buildups' envelope, so a depth view made from another
 * envelope is rebuilt: queued `BUILDUP_REBUILD_DELAY_SECONDS` ahead, a newer
 * save replacing a queued or running build. Nothing happens for sections
 * whose depth view nobody asked for, for other velocity models, or when the
 * envelope did not move.
 */
export async function buildupsChangedForDepth(sectionId: number): Promise<boolean> {
  try {
    const row = await SectionDepthPyramid.findByPk(sectionId);
    if (!row) return false;
    const vel = await SectionVelocity.findByPk(sectionId);
    if (((vel?.model ?? DEFAULT_VELOCITY) as { kind: string }).kind !== 'buildup') return false;
    const s = await Section.findByPk(sectionId);
    if (!s || (await unavailableReason(s))) return false;
    if (row.status === 'ready' && stableJson(await depthBasisOf(s)) === stableJson(row.readyBasis)) return false;
    await ctx().sequelize.transaction((transaction) => queueDepthBuild(sectionId, transaction, { delaySeconds: BUILDUP_REBUILD_DELAY_SECONDS }));
    return true;
  } catch (err) {
    logger.warn({ err, sectionId }, 'queueing the depth view after a buildup change failed');
    return false;
  }
}

async function readyBuild(actor: Actor, sectionId: number, build: number) {
  const s = await sectionForViewer(actor, sectionId);
  const row = await SectionDepthPyramid.findByPk(s.id);
  if (!row || row.readyBuild !== build || !row.readyPyramid) throw notFound('Depth view build');
  return { s, row };
}

/** One depth tile of the current ready build; z, x, y checked against its grid before any key is built. */
export async function openDepthTile(actor: Actor, sectionId: number, build: number, z: number, x: number, y: number): Promise<StoredObject> {
  const { s, row } = await readyBuild(actor, sectionId, build);
  const level = pyramidLevels(s.width, s.height, row.readyPyramid!.tileSize)[z];
  if (!level || x >= level.columns || y >= level.rows) throw notFound('Tile');
  const obj = await store().get(`${depthPrefix(s.storageKey, build)}/tiles/${z}/${x}_${y}.${TILE_EXT}`);
  if (!obj) throw notFound('Tile');
  return obj;
}

export async function openDepthPreview(actor: Actor, sectionId: number, build: number): Promise<StoredObject> {
  const { s } = await readyBuild(actor, sectionId, build);
  const obj = await store().get(`${depthPrefix(s.storageKey, build)}/preview.jpg`);
  if (!obj) throw notFound('Image');
  return obj;
}
