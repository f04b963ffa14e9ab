/**
 * Who may see or change a section: members of its project (and admins) read;
 * interpreters who are members, and admins, change (assertCanEdit).
 * Non-members get 404 so they learn nothing. Used by the section, calibration,
 * velocity, buildup, note, review and report services.
 */
import type { Transaction } from 'sequelize';
import { AppError, notFound } from '../errors';
import { Section } from '../models/section';
import { assertCanEdit, projectForViewer, type Actor } from './project.service';

export async function loadSection(id: number, transaction?: Transaction): Promise<Section> {
  const s = Number.isInteger(id) && id > 0 ? await Section.findByPk(id, { transaction }) : null;
  if (!s) throw notFound('Section');
  return s;
}

/** A section the actor may see; 404 for non-members so they learn nothing. */
export async function sectionForViewer(actor: Actor, id: number): Promise<Section> {
  const s = await loadSection(id);
  try {
    await projectForViewer(actor, s.projectId);
  } catch (e) {
    if (e instanceof AppError && e.status === 404) throw notFound('Section');
    throw e;
  }
  return s;
}

/** A section the actor may change: 404 non-member, 403 member without an editing role. */
export async function sectionForEditor(actor: Actor, id: number): Promise<Section> {
  const s = await loadSection(id);
  try {
    await assertCanEdit(actor, s.projectId);
  } catch (e) {
    if (e instanceof AppError && e.status === 404) throw notFound('Section');
    throw e;
  }
  return s;
}
