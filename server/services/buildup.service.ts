/**
 * Buildups traced on a section: create, list, load, save with optimistic
 * locking, delete; measurements computed by the
 * shared engine from the stored pixel geometry, the section's latest
 * calibration and its velocity model (velocity.service.ts).
 */
import { Buildup } from '../models/buildup';
import { Section, SectionCalibration } from '../models/section';
import { User } from '../models/index';
import { AppError, notFound } from '../errors';
import { assertCanEdit, type Actor } from './project.service';
import { sectionForEditor, sectionForViewer } from './section-access';
import { velocityOf } from './velocity.service';
import { audit } from './audit.service';
import { afterSave, assertNotSignedOff, recordVersion } from './review.service';
import { markBuildupNotesRemoved, refreshNoteAnchors } from './note.service';
import { ctx } from '../context';
import { logger } from '../logger';
import { writeSummary, type SummarySources } from './summary-store';
import { sendSummaryJob } from '../jobs/summary-queue';
import { MeasureInputError, type MeasurementOutput } from '../../shared/measure/index';
import { measureWorkProblem } from '../../shared/schemas/measure-limits';
import { measureOffLoop } from '../measure/pool';
import { cachedMeasurement, stableJson } from '../measure/cache';
import { fromGeometry, toInterpretationInput, ModelError, type BuildupGeometry } from '../../shared/editor/model';
import type { BuildupSummary, SaveBuildupInput } from '../../shared/schemas/buildups';
import { buildupsChangedForDepth } from './depth-view.service';

const EMPTY_GEOMETRY: BuildupGeometry = { base: [], cycles: [], terminations: [], topIsDrowningSurface: false };

async function buildupForViewer(actor: Actor, id: number): Promise<{ buildup: Buildup; section: Section }> {
  const buildup = await Buildup.findByPk(id);
  if (!buildup) throw notFound('Buildup');
  const section = await sectionForViewer(actor, buildup.sectionId).catch(() => {
    throw notFound('Buildup');
  });
  return { buildup, section };
}

function summary(b: Buildup): BuildupSummary {
  return {
    id: b.id,
    sectionId: b.sectionId,
    name: b.name,
    version: b.version,
    cycleCount: b.geometry.cycles.length,
    updatedAt: b.updatedAt.toISOString(),
    updatedBy: b.updatedBy ? { id: b.updatedBy.id, name: b.updatedBy.name } : null,
    reviewState: b.reviewState,
  };
}

export async function listBuildups(actor: Actor, sectionId: number) {
  await sectionForViewer(actor, sectionId);
  const rows = await Buildup.findAll({
    where: { sectionId },
    include: [{ model: User, as: 'updatedBy', attributes: ['id', 'name'] }],
    order: [['createdAt', 'ASC']],
  });
  return rows.map((b) => ({ ...summary(b), geometry: b.geometry }));
}

export async function createBuildup(actor: Actor, sectionId: number, name: string) {
  await sectionForEditor(actor, sectionId);
  const b = await ctx().sequelize.transaction(async (transaction) => {
    const row = await Buildup.create({ sectionId, name, geometry: EMPTY_GEOMETRY, createdById: actor.id, updatedById: actor.id }, { transaction });
    await audit(actor.id, 'buildup.create', 'buildup', row.id, { sectionId, name }, transaction);
    await recordVersion(row, actor.id, transaction);
    return row;
  });
  return { id: b.id, version: b.version };
}

export async function getBuildup(actor: Actor, id: number) {
  const { buildup } = await buildupForViewer(actor, id);
  return { id: buildup.id, sectionId: buildup.sectionId, name: buildup.name, version: buildup.version, geometry: buildup.geometry, updatedAt: buildup.updatedAt.toISOString(), reviewState: buildup.reviewState };
}

/** Save with optimistic locking: a stale `version` answers 409 with the current record, nothing is overwritten. */
export async function saveBuildup(actor: Actor, id: number, input: SaveBuildupInput) {
  const { buildup: found } = await buildupForViewer(actor, id);
  const section = await Section.findByPk(found.sectionId);
  await assertCanEdit(actor, section!.projectId);
  const saved = await ctx().sequelize.transaction(async (transaction) => {
    const b = await Buildup.findByPk(id, { transaction, lock: transaction.LOCK.UPDATE });
    if (!b) throw notFound('Buildup');
    await assertNotSignedOff(b, transaction);
    if (b.version !== input.version) {
      throw new AppError(409, 'version_conflict', `Someone saved this buildup after you loaded it (yours is version ${input.version}, the saved one ${b.version})`, {
        current: { id: b.id, name: b.name, version: b.version, geometry: b.geometry, updatedAt: b.updatedAt.toISOString() },
      });
    }
    const geometry: BuildupGeometry = {
      ...input.geometry,
      cycles: input.geometry.cycles.map(({ flankLeft, flankRight, ...c }) => ({
        ...c,
        marginLeft: c.marginLeft ?? null,
        marginRight: c.marginRight ?? null,
        ...(flankLeft ? { flankLeft } : {}),
        ...(flankRight ? { flankRight } : {}),
      })),
    };
    b.set({ geometry, updatedById: actor.id, version: b.version + 1 });
    if (input.name) b.set('name', input.name);
    await b.save({ transaction });
    await audit(actor.id, 'buildup.save', 'buildup', b.id, { version: b.version }, transaction);
    await afterSave(actor, b, transaction);
    await refreshNoteAnchors(b.id, b.geometry, transaction);
    await sendSummaryJob(b.id, transaction); // the register's figures of the new version
    return { version: b.version, updatedAt: b.updatedAt.toISOString() };
  });
  // awaited, so the client's next look at the depth view already sees the rebuild queued
  await buildupsChangedForDepth(found.sectionId); // with the buildup velocity model the envelope may have moved
  return saved;
}

export async function deleteBuildup(actor: Actor, id: number) {
  const { buildup, section } = await buildupForViewer(actor, id);
  await assertCanEdit(actor, section.projectId);
  await ctx().sequelize.transaction(async (transaction) => {
    const locked = await Buildup.findByPk(id, { transaction, lock: transaction.LOCK.UPDATE });
    if (!locked) throw notFound('Buildup');
    await assertNotSignedOff(locked, transaction);
    await locked.destroy({ transaction });
    await audit(actor.id, 'buildup.delete', 'buildup', id, { name: buildup.name }, transaction);
    await markBuildupNotesRemoved(id, transaction);
  });
  await buildupsChangedForDepth(section.id);
}

/** Everything the engine needs besides the geometry: latest Ties, vertical domain, velocity model. */
export async function measureContext(section: Section) {
  return (await measureSources(section)).context;
}

/** The measurement context and the versions it came from (the cache key of a stored buildup's numbers). */
async function measureSources(section: Section) {
  const cal = await SectionCalibration.findOne({ where: { sectionId: section.id }, order: [['version', 'DESC']] });
  if (!cal) throw new AppError(409, 'not_calibrated', 'calibration: the section has no Ties yet; calibrate it before measuring');
  const v = await velocityOf(section.id);
  return {
    context: { calibrationTies: cal.ties, verticalDomain: section.verticalDomain, velocity: v.velocity },
    versions: { calibration: [cal.id, cal.version], domain: section.verticalDomain, velocity: [v.updatedAt, v.velocity] },
  };
}

/**
 * A stored buildup's measurements, computed on the measurement pool (off the
 * event loop) and cached per buildup version, calibration version, velocity
 * model and options (server/measure/cache.ts). Work beyond the budget
 * (shared/schemas/measure-limits.ts) answers 422 `work_too_large` naming `draws`.
 */
export async function measureBuildup(actor: Actor, id: number, options?: unknown): Promise<MeasurementOutput> {
  const { buildup, section } = await buildupForViewer(actor, id);
  return measureStored(buildup, section, options);
}

/**
 * The measurements of a stored buildup (no access check: callers check). With
 * the default options the figures also go into the buildup's register
 * summary (server/services/summary-store.ts), or why it cannot be measured.
 */
export async function measureStored(buildup: Buildup, section: Section, options?: unknown): Promise<MeasurementOutput> {
  const { context, versions } = await measureSources(section);
  const key = stableJson({ buildup: [buildup.id, buildup.version], ...versions, options: options ?? {} });
  const isDefault = stableJson(options ?? {}) === '{}';
  const sources: SummarySources = {
    buildupId: buildup.id,
    buildupVersion: buildup.version,
    calibrationId: versions.calibration[0] as number,
    velocityAt: versions.velocity[0] ? new Date(versions.velocity[0] as string) : null,
    verticalDomain: section.verticalDomain,
    width: section.width,
    height: section.height,
  };
  const keep = (result: Parameters<typeof writeSummary>[1]) =>
    isDefault ? writeSummary(sources, result).catch((err) => logger.warn({ err, buildupId: buildup.id }, 'could not keep the register summary')) : undefined;
  try {
    return await cachedMeasurement(ctx().sequelize, key, async () => {
      const editor = fromGeometry({ id: buildup.id, name: buildup.name, version: buildup.version, geometry: buildup.geometry });
      const input = toInterpretationInput(editor, context);
      const tooMuch = measureWorkProblem(input, (options as { draws?: unknown } | undefined)?.draws, 'draws');
      if (tooMuch) throw new AppError(422, 'work_too_large', `${tooMuch.path}: ${tooMuch.message}`, [{ path: tooMuch.path, message: tooMuch.message }]);
      const output = await measureOffLoop(input, options);
      await keep({ output });
      return output;
    });
  } catch (e) {
    if (e instanceof ModelError || e instanceof MeasureInputError) {
      await keep({ status: 'not_measurable', problem: e.message });
      throw new AppError(422, 'not_measurable', `${e.message}`, { path: (e as { path?: string }).path });
    }
    if (e instanceof AppError && e.code === 'work_too_large') await keep({ status: 'failed', problem: e.message });
    throw e;
  }
}
