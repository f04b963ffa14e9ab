/**
 * Sections: upload (checked, stored, queued), read, list, edit with
 * optimistic locking, retry, delete, files (tiles, preview, thumbnail).
 * Calibrations: calibration.service.ts; velocity: velocity.service.ts.
 *
 * Access (section-access.ts): members of the section's project (and admins)
 * read; interpreters who are members, and admins, change (assertCanEdit).
 * Non-members get 404.
 */
import { Op, type Transaction, type WhereOptions } from 'sequelize';
import { ctx } from '../context';
import { AppError, notFound } from '../errors';
import { Section, SectionCalibration } from '../models/section';
import { User } from '../models/index';
import { assertCanEdit, projectForViewer, type Actor } from './project.service';
import { loadSection, sectionForEditor, sectionForViewer } from './section-access';
import { calibrationRecord, createCalibrationVersion, latestCalibration, latestCalibrationVersions, lineLength } from './calibration.service';
import { audit } from './audit.service';
import { afterSectionDeleted as afterSegySectionDeleted } from './segy.service';
import { inspectImage } from './image.service';
import { tilesDescriptor, pyramidLevels, TILE_EXT } from './tiles.service';
import { fileStoreFor, randomName, type StoredObject } from '../storage/fileStore';
import { queuePyramid, nudgeWorkers, stuckReason, buildScratchPrefix } from '../jobs/pyramid.job';
import { sectionKeys } from '../storage/keys';
import { cancelPyramidJob } from '../jobs/queue';
import type {
  CalibrationInput,
  CreateSectionFields,
  SectionAccepted,
  SectionDetail,
  SectionPage,
  SectionSummary,
  UpdateSectionInput,
} from '../../shared/schemas/sections';

const store = () => fileStoreFor(ctx().config.storageDir);

// ---- shapes ------------------------------------------------------------------

const userRef = (u: User | null | undefined) => (u ? { id: u.id, name: u.name } : null);
const iso = (d: Date) => d.toISOString();

function fileUrl(s: Section, name: 'thumbnail' | 'preview') {
  return s.status === 'ready' ? `/api/sections/${s.id}/${name}` : null;
}

function summary(s: Section, calibrationVersion: number | null): SectionSummary {
  return {
    id: s.id,
    projectId: s.projectId,
    title: s.title,
    lineName: s.lineName,
    survey: s.survey,
    verticalDomain: s.verticalDomain,
    status: s.status,
    progress: s.progress,
    failureReason: s.failureReason ?? null,
    width: s.width,
    height: s.height,
    thumbnailUrl: fileUrl(s, 'thumbnail'),
    uploadedBy: userRef(s.uploadedBy),
    calibrationVersion,
    createdAt: iso(s.createdAt),
    updatedAt: iso(s.updatedAt),
    version: s.version,
  };
}

export async function sectionDetail(actor: Actor, id: number): Promise<SectionDetail> {
  await sectionForViewer(actor, id);
  const s = (await Section.findByPk(id, { include: [{ model: User, as: 'uploadedBy', attributes: ['id', 'name'] }] }))!;
  const cal = await latestCalibration(id);
  const p = s.status === 'ready' ? s.pyramid : null;
  return {
    ...summary(s, cal?.version ?? null),
    notes: s.notes,
    polarityNote: s.polarityNote,
    startLon: s.startLon ?? null,
    startLat: s.startLat ?? null,
    endLon: s.endLon ?? null,
    endLat: s.endLat ?? null,
    sourceFormat: s.sourceFormat,
    sourceBytes: s.sourceBytes,
    segy: s.sourceKind === 'segy' ? { uploadId: s.segyUploadId!, selection: s.segySelection ?? null, render: s.renderSettings ?? null } : null,
    previewUrl: fileUrl(s, 'preview'),
    tiles: p ? tilesDescriptor(s.id, s.width, s.height, p.tileSize, p.overlap) : null,
    calibration: cal ? calibrationRecord(s, cal) : null,
    lineLengthM: lineLength(s),
  };
}

// ---- list ----------------------------------------------------------------------

export async function listSections(
  actor: Actor,
  projectId: number,
  q: { q?: string; page: number; pageSize: number; sort: string },
): Promise<SectionPage> {
  await projectForViewer(actor, projectId);
  const where: WhereOptions = { projectId };
  if (q.q) {
    const like = `%${q.q.replace(/[\\%_]/g, (c) => `\\${c}`)}%`;
    Object.assign(where, {
      [Op.or]: [{ title: { [Op.iLike]: like } }, { lineName: { [Op.iLike]: like } }, { survey: { [Op.iLike]: like } }, { notes: { [Op.iLike]: like } }],
    });
  }
  const desc = q.sort.startsWith('-');
  const field = desc ? q.sort.slice(1) : q.sort;
  const { rows, count } = await Section.findAndCountAll({
    where,
    include: [{ model: User, as: 'uploadedBy', attributes: ['id', 'name'] }],
    order: [
      [field, desc ? 'DESC' : 'ASC'],
      ['id', desc ? 'DESC' : 'ASC'],
    ],
    limit: q.pageSize,
    offset: (q.page - 1) * q.pageSize,
  });
  const versions = await latestCalibrationVersions(rows.map((r) => r.id));
  return { items: rows.map((s) => summary(s, versions.get(s.id) ?? null)), total: count, page: q.page, pageSize: q.pageSize };
}

// ---- upload ------------------------------------------------------------------------

/**
 * Check the uploaded file, then in one transaction create the row, move the
 * file into the store and queue its pyramid job. Any failure leaves no row,
 * no stored file and no job.
 */
export async function createSection(
  actor: Actor,
  projectId: number,
  fields: CreateSectionFields,
  file: { path: string },
): Promise<SectionAccepted> {
  await assertCanEdit(actor, projectId);
  const s = await storeNewSection(actor.id, projectId, fields, file.path);
  return { id: s.id, status: 'processing' };
}

/**
 * The upload's work without the HTTP side (also used by the demo seeder):
 * inspect the file, then in one transaction create the row, move the file
 * into the store, optionally store calibration version 1, and queue the job.
 */
export async function storeNewSection(
  userId: number,
  projectId: number,
  fields: CreateSectionFields,
  filePath: string,
  opts: { ties?: CalibrationInput['ties'] } = {},
): Promise<Section> {
  const { config, sequelize } = ctx();
  const info = await inspectImage(filePath, { maxInputPixels: config.upload.maxInputPixels });
  const storageKey = randomName();
  const keys = sectionKeys(storageKey);
  try {
    const section = await sequelize.transaction(async (transaction) => {
      const s = await Section.create(
        {
          projectId,
          title: fields.title,
          lineName: fields.lineName,
          survey: fields.survey,
          verticalDomain: fields.verticalDomain,
          notes: fields.notes,
          polarityNote: fields.polarityNote,
          startLon: fields.startLon ?? null,
          startLat: fields.startLat ?? null,
          endLon: fields.endLon ?? null,
          endLat: fields.endLat ?? null,
          width: info.width,
          height: info.height,
          sourceFormat: info.format,
          sourceBytes: info.bytes,
          storageKey,
          uploadedById: userId,
        },
        { transaction },
      );
      await store().importFile(filePath, keys.original);
      if (opts.ties) await createCalibrationVersion(s.id, userId, { ties: opts.ties }, { transaction });
      await queuePyramid(s, transaction);
      const details = { projectId, title: s.title, format: info.format, width: info.width, height: info.height };
      await audit(userId, 'section.upload', 'section', s.id, details, transaction);
      return s;
    });
    nudgeWorkers();
    return section;
  } catch (e) {
    await store().removePrefix(keys.root);
    throw e;
  }
}

// ---- edit, retry, delete ----------------------------------------------------------------

export async function updateSection(actor: Actor, id: number, input: UpdateSectionInput): Promise<SectionDetail> {
  const s = await sectionForEditor(actor, id);
  const { version, ...changes } = input;
  const conflict = () =>
    new AppError(409, 'version_conflict', 'Someone else changed this section meanwhile: reload it and apply your change again', {
      currentVersion: s.version,
    });
  if (s.version !== version) throw conflict();
  s.set(changes as Partial<Section>);
  try {
    await ctx().sequelize.transaction(async (transaction) => {
      await s.save({ transaction });
      await audit(actor.id, 'section.update', 'section', id, changes, transaction);
    });
  } catch (e) {
    if ((e as Error).name === 'SequelizeOptimisticLockError') {
      await s.reload();
      throw conflict();
    }
    throw e;
  }
  return sectionDetail(actor, id);
}

/**
 * Build a section's tiles again: a failed one, or a `processing` one whose
 * build has no live owner (its process died) or reported no progress for the
 * stall time (jobs/pyramid.job.ts `stuckReason`). A build a live process is
 * running answers 409. The old job is cancelled; attempts start again.
 */
export async function retrySection(actor: Actor, id: number): Promise<SectionAccepted> {
  await sectionForEditor(actor, id);
  await ctx().sequelize.transaction(async (transaction) => {
    const s = (await Section.findByPk(id, { transaction, lock: transaction.LOCK.UPDATE }))!;
    if (s.status === 'processing') {
      if (!(await stuckReason(s))) {
        throw new AppError(
          409,
          'build_running',
          `The section's tiles are being built (${s.progress} %, ${s.workerId ? 'by a running worker' : 'waiting for a worker'}); retry is for a failed or stuck build`,
        );
      }
    } else if (s.status !== 'failed') {
      throw new AppError(409, 'not_failed', `Only a failed or stuck section can be retried (this one is ${s.status})`);
    }
    await cancelPyramidJob(s.jobId, transaction);
    await queuePyramid(Object.assign(s, { attempts: 0 }), transaction);
    await audit(actor.id, 'section.retry', 'section', id, null, transaction);
  });
  nudgeWorkers();
  return { id, status: 'processing' };
}

/**
 * Rows (section, calibrations by cascade) and its job (cancelled) in one
 * transaction; files and build scratch after the commit. A build running
 * meanwhile finds its row gone at its next progress report, stops and removes
 * its own scratch.
 */
export async function deleteSection(actor: Actor, id: number) {
  const s = await sectionForEditor(actor, id);
  await ctx().sequelize.transaction(async (transaction) => {
    const row = await Section.findByPk(id, { transaction, lock: transaction.LOCK.UPDATE });
    if (row?.status === 'processing') await cancelPyramidJob(row.jobId, transaction);
    await SectionCalibration.destroy({ where: { sectionId: id }, transaction });
    await Section.destroy({ where: { id }, transaction });
    await audit(actor.id, 'section.delete', 'section', id, { title: s.title, projectId: s.projectId }, transaction);
  });
  await store().removePrefix(sectionKeys(s.storageKey).root);
  await store().removeScratch(buildScratchPrefix(s.storageKey));
  await afterSegySectionDeleted(s, actor.id); // a 2D SEG-Y upload no section uses any more goes too
}

// ---- files ----------------------------------------------------------------------------------

function assertReady(s: Section) {
  if (s.status !== 'ready' || !s.pyramid) {
    throw new AppError(409, 'section_not_ready', `The section's tiles are not ready (status ${s.status})`);
  }
}

/** One tile; z, x, y are integers checked against the pyramid's grid before any key is built. */
export async function openTile(actor: Actor, id: number, z: number, x: number, y: number): Promise<StoredObject> {
  const s = await sectionForViewer(actor, id);
  assertReady(s);
  const level = pyramidLevels(s.width, s.height, s.pyramid!.tileSize)[z];
  if (!level || x >= level.columns || y >= level.rows) throw notFound('Tile');
  const obj = await store().get(`${sectionKeys(s.storageKey).pyramid}/tiles/${z}/${x}_${y}.${TILE_EXT}`);
  if (!obj) throw notFound('Tile');
  return obj;
}

export async function openImage(actor: Actor, id: number, which: 'preview' | 'thumbnail'): Promise<StoredObject> {
  const s = await sectionForViewer(actor, id);
  assertReady(s);
  const obj = await store().get(`${sectionKeys(s.storageKey).pyramid}/${which === 'preview' ? 'preview' : 'thumbnail'}.jpg`);
  if (!obj) throw notFound('Image');
  return obj;
}
