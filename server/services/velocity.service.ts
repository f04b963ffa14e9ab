/**
 * A section's velocity model (measurement-spec §3): one row per section in
 * `section_velocities`, or the default buildup-aware model with its sources
 * (shared/schemas/buildups.ts) while none is set. Changing it is refused
 * while a buildup on the section is signed off (409 `signed_off`).
 */
import { ctx } from '../context';
import { SectionVelocity } from '../models/buildup';
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
}

/** The section's velocity model, or the default (no access check: callers check). */
export async function velocityOf(sectionId: number): Promise<VelocityInfo> {
  const row = await SectionVelocity.findByPk(sectionId);
  if (!row) return { velocity: DEFAULT_VELOCITY as VelocityModel, isDefault: true, sources: DEFAULT_VELOCITY_SOURCES, updatedAt: null };
  return { velocity: row.model as VelocityModel, isDefault: false, sources: [], updatedAt: row.updatedAt.toISOString() };
}

export async function getVelocity(actor: Actor, sectionId: number): Promise<VelocityInfo> {
  await sectionForViewer(actor, sectionId);
  return velocityOf(sectionId);
}

export async function putVelocity(actor: Actor, sectionId: number, velocity: VelocityModel): Promise<VelocityInfo> {
  await sectionForEditor(actor, sectionId);
  await ctx().sequelize.transaction(async (transaction) => {
    await assertSectionNotFrozen(sectionId, transaction);
    await SectionVelocity.upsert({ sectionId, model: velocity, updatedById: actor.id, updatedAt: new Date() }, { transaction });
    await audit(actor.id, 'section.velocity', 'section', sectionId, velocity, transaction);
    await depthSourcesChanged(sectionId, transaction); // a depth view made with the older model is rebuilt
  });
  return velocityOf(sectionId);
}
