/**
 * A section's velocity model (measurement-spec §3): one row per section in
 * `section_velocities`, or the default buildup-aware model with its sources
 * (shared/schemas/buildups.ts) while none is set. Changing it is refused
 * while a buildup on the section is signed off (409 `signed_off`).
 */
import { UniqueConstraintError } from 'sequelize';
import { ctx } from '../context';
import { AppError } from '../errors';
import { SectionVelocity } from '../models/buildup';
import { User } from '../models/index';
import type { Actor } from './project.service';
import { audit } from './audit.service';
import { depthSourcesChanged } from '../jobs/depth.job';
import { sectionForEditor, sectionForViewer } from './section-access';
import { assertSectionNotFrozen } from './review.service';
import { DEFAULT_VELOCITY, DEFAULT_VELOCITY_SOURCES } from '../../shared/schemas/buildups';
import type { VelocityModel } from '../../shared/editor/model';

export interface VelocityInfo {
  velocity: VelocityModel;
  isDefault: boolean;
  sources: string[];
  updatedAt: string | null;
  /** Who saved the stored model (null for the default or a removed account). */
  updatedBy: { id: number; name: string } | null;
}

/** The section's velocity model, or the default (no access check: callers check). */
export async function velocityOf(sectionId: number): Promise<VelocityInfo> {
  const row = await SectionVelocity.findByPk(sectionId);
  if (!row) return { velocity: DEFAULT_VELOCITY as VelocityModel, isDefault: true, sources: DEFAULT_VELOCITY_SOURCES, updatedAt: null, updatedBy: null };
  const by = row.updatedById ? await User.findByPk(row.updatedById, { attributes: ['id', 'name'] }) : null;
  return { velocity: row.model as VelocityModel, isDefault: false, sources: [], updatedAt: row.updatedAt.toISOString(), updatedBy: by ? { id: by.id, name: by.name } : null };
}

export async function getVelocity(actor: Actor, sectionId: number): Promise<VelocityInfo> {
  await sectionForViewer(actor, sectionId);
  return velocityOf(sectionId);
}

/**
 * Store the section's velocity model. `baseUpdatedAt` is the `updatedAt` of
 * the model the person started from (null: the house default, nothing stored
 * yet); when someone saved another model meanwhile the save answers 409
 * `version_conflict` with that model in `details.current` and changes
 * nothing. Left out, the model is written whatever is stored (API callers
 * that do not read first).
 */
export async function putVelocity(actor: Actor, sectionId: number, velocity: VelocityModel, baseUpdatedAt?: string | null): Promise<VelocityInfo> {
  await sectionForEditor(actor, sectionId);
  const stale = async () =>
    new AppError(409, 'version_conflict', 'Someone saved another velocity model for this section after you opened it', { current: await velocityOf(sectionId) });
  try {
    await ctx().sequelize.transaction(async (transaction) => {
      await assertSectionNotFrozen(sectionId, transaction);
      if (baseUpdatedAt === undefined) {
        await SectionVelocity.upsert({ sectionId, model: velocity, updatedById: actor.id, updatedAt: new Date() }, { transaction });
      } else {
        const row = await SectionVelocity.findByPk(sectionId, { transaction, lock: transaction.LOCK.UPDATE });
        if ((row ? row.updatedAt.toISOString() : null) !== baseUpdatedAt) throw await stale();
        // No row yet: a plain insert, so two first saves at once cannot both win (the second meets the key).
        if (row) await row.update({ model: velocity, updatedById: actor.id, updatedAt: new Date() }, { transaction });
        else await SectionVelocity.create({ sectionId, model: velocity, updatedById: actor.id, updatedAt: new Date() }, { transaction });
      }
      await audit(actor.id, 'section.velocity', 'section', sectionId, velocity, transaction);
      await depthSourcesChanged(sectionId, transaction); // a depth view made with the older model is rebuilt
    });
  } catch (e) {
    if (e instanceof UniqueConstraintError) throw await stale();
    throw e;
  }
  return velocityOf(sectionId);
}
