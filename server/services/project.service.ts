import { Op, type Transaction } from 'sequelize';
import { Project, ProjectMember, User } from '../models/index';
import { AppError, forbidden, notFound } from '../errors';
import { audit } from './audit.service';
import { ctx } from '../context';
import { Section } from '../models/section';
import { fileStoreFor } from '../storage/fileStore';
import { sectionKeys } from '../storage/keys';
import type { CreateProjectInput, UpdateProjectInput, ProjectDetail, ProjectMemberView, ProjectSummary, Page } from '../../shared/schemas/projects';

export interface Actor {
  id: number;
  role: string;
}

export async function isMember(projectId: number, userId: number, transaction?: Transaction) {
  return (await ProjectMember.count({ where: { projectId, userId }, transaction })) > 0;
}

/** Load a project the actor may see (member or admin); 404 otherwise so non-members learn nothing. */
export async function projectForViewer(actor: Actor, projectId: number): Promise<Project> {
  const project = Number.isInteger(projectId) ? await Project.findByPk(projectId) : null;
  if (!project) throw notFound('Project');
  if (actor.role !== 'admin' && !(await isMember(projectId, actor.id))) throw notFound('Project');
  return project;
}

/** Interpreters who are members, and admins, may change a project and its content. */
export async function assertCanEdit(actor: Actor, projectId: number) {
  await projectForViewer(actor, projectId);
  if (actor.role === 'admin') return;
  if (actor.role !== 'interpreter') throw forbidden('Only interpreters who are members, or admins, may change this project');
}

/** Whether the user owns the project. */
export async function isOwner(projectId: number, userId: number, transaction?: Transaction) {
  return (await ProjectMember.count({ where: { projectId, userId, role: 'owner' }, transaction })) > 0;
}

/** Owners of the given projects, by project id. */
async function ownersOf(projectIds: number[]): Promise<Map<number, { id: number; name: string }>> {
  const out = new Map<number, { id: number; name: string }>();
  if (!projectIds.length) return out;
  const rows = await ProjectMember.findAll({
    where: { projectId: projectIds, role: 'owner' },
    include: [{ model: User, as: 'user', attributes: ['id', 'name'] }],
  });
  for (const r of rows) {
    const u = (r as unknown as { user: User }).user;
    out.set(r.projectId, { id: u.id, name: u.name });
  }
  return out;
}

function summary(p: Project, memberCount: number, owner: { id: number; name: string } | null): ProjectSummary {
  return {
    id: p.id,
    name: p.name,
    description: p.description,
    createdAt: p.createdAt.toISOString(),
    updatedAt: p.updatedAt.toISOString(),
    createdBy: p.createdBy ? { id: p.createdBy.id, name: p.createdBy.name } : null,
    owner,
    memberCount,
  };
}

export async function listProjects(actor: Actor, q: { q?: string; page: number; pageSize: number }): Promise<Page<ProjectSummary>> {
  const where: Record<string | symbol, unknown> = {};
  if (q.q) where[Op.or] = [{ name: { [Op.iLike]: `%${q.q}%` } }, { description: { [Op.iLike]: `%${q.q}%` } }];
  if (actor.role !== 'admin') {
    where.id = { [Op.in]: ctx().sequelize.literal(`(SELECT project_id FROM project_members WHERE user_id = ${Number(actor.id)})`) };
  }
  const { rows, count } = await Project.findAndCountAll({
    where,
    include: [{ model: User, as: 'createdBy', attributes: ['id', 'name'] }],
    order: [['updatedAt', 'DESC']],
    limit: q.pageSize,
    offset: (q.page - 1) * q.pageSize,
  });
  const counts = new Map<number, number>();
  if (rows.length) {
    const cs = (await ProjectMember.count({
      where: { projectId: rows.map((r) => r.id) },
      group: ['projectId'],
    })) as unknown as { projectId: number; count: number }[];
    for (const c of cs) counts.set(c.projectId, Number(c.count));
  }
  const owners = await ownersOf(rows.map((r) => r.id));
  return { items: rows.map((p) => summary(p, counts.get(p.id) ?? 0, owners.get(p.id) ?? null)), total: count, page: q.page, pageSize: q.pageSize };
}

export async function members(projectId: number): Promise<ProjectMemberView[]> {
  const ms = await ProjectMember.findAll({ where: { projectId }, include: [{ model: User, as: 'user' }] });
  return ms
    .map((m) => ({ ...(m as unknown as { user: User }).user.toPublic(), projectRole: m.role }))
    .sort((a, b) => a.name.localeCompare(b.name));
}

export async function projectDetail(actor: Actor, projectId: number): Promise<ProjectDetail> {
  await projectForViewer(actor, projectId);
  const p = (await Project.findByPk(projectId, { include: [{ model: User, as: 'createdBy', attributes: ['id', 'name'] }] }))!;
  const ms = await members(projectId);
  const canEdit = actor.role === 'admin' || actor.role === 'interpreter';
  const owner = ms.find((m) => m.projectRole === 'owner');
  return { ...summary(p, ms.length, owner ? { id: owner.id, name: owner.name } : null), members: ms, canEdit };
}

export async function createProject(actor: Actor, input: CreateProjectInput): Promise<ProjectDetail> {
  const project = await ctx().sequelize.transaction(async (transaction) => {
    const p = await Project.create({ name: input.name, description: input.description ?? '', createdById: actor.id }, { transaction });
    await ProjectMember.create({ projectId: p.id, userId: actor.id, role: 'owner' }, { transaction });
    await audit(actor.id, 'project.create', 'project', p.id, { name: p.name }, transaction);
    return p;
  });
  return projectDetail(actor, project.id);
}

export async function updateProject(actor: Actor, projectId: number, input: UpdateProjectInput): Promise<ProjectDetail> {
  await assertCanEdit(actor, projectId);
  await ctx().sequelize.transaction(async (transaction) => {
    const p = (await Project.findByPk(projectId, { transaction }))!;
    await p.update(input, { transaction });
    await audit(actor.id, 'project.update', 'project', projectId, input, transaction);
  });
  return projectDetail(actor, projectId);
}

export async function deleteProject(actor: Actor, projectId: number) {
  const p = await projectForViewer(actor, projectId);
  if (actor.role !== 'admin' && !(await isOwner(projectId, actor.id))) throw forbidden('Only the owner of a project or an admin may delete it');
  const sections = await Section.findAll({ where: { projectId }, attributes: ['id', 'storageKey'] });
  await ctx().sequelize.transaction(async (transaction) => {
    await p.destroy({ transaction });
    await audit(actor.id, 'project.delete', 'project', projectId, { name: p.name, sections: sections.length }, transaction);
  });
  // Files go after the rows are gone for good (the boot sweep catches any left by a crash here).
  const store = fileStoreFor(ctx().config.storageDir);
  for (const s of sections) await store.removePrefix(sectionKeys(s.storageKey).root);
}

export async function addMember(actor: Actor, projectId: number, userId: number): Promise<ProjectMemberView[]> {
  await assertCanEdit(actor, projectId);
  const user = await User.findByPk(userId);
  if (!user || !user.active) throw new AppError(400, 'validation_failed', 'userId: no active user with this id');
  await ctx().sequelize.transaction(async (transaction) => {
    await ProjectMember.findOrCreate({ where: { projectId, userId }, transaction });
    await audit(actor.id, 'project.member.add', 'project', projectId, { userId }, transaction);
  });
  return members(projectId);
}

/**
 * Interpreter members and admins remove members. The owner stays until
 * ownership moves to someone else: an admin or the owner (leaving) gets 409,
 * anyone else 403.
 */
export async function removeMember(actor: Actor, projectId: number, userId: number) {
  await assertCanEdit(actor, projectId);
  await ctx().sequelize.transaction(async (transaction) => {
    const m = await ProjectMember.findOne({ where: { projectId, userId }, transaction, lock: transaction.LOCK.UPDATE });
    if (!m) throw notFound('Member');
    if (m.role === 'owner') {
      if (actor.role !== 'admin' && actor.id !== userId) {
        throw forbidden('The project owner can only be removed by an admin, once ownership has moved to another member');
      }
      throw new AppError(409, 'owner_required', 'userId: the project owner cannot be removed; make another member the owner first');
    }
    await m.destroy({ transaction });
    await audit(actor.id, 'project.member.remove', 'project', projectId, { userId }, transaction);
  });
}

/**
 * Hand ownership to another member (the owner or an admin). The new owner
 * must be an active interpreter or admin, as they may then delete the
 * project. Member rows are locked so a concurrent removal cannot leave the
 * project without an owner.
 */
export async function transferOwner(actor: Actor, projectId: number, userId: number): Promise<ProjectDetail> {
  await projectForViewer(actor, projectId);
  await ctx().sequelize.transaction(async (transaction) => {
    const rows = await ProjectMember.findAll({ where: { projectId }, transaction, lock: transaction.LOCK.UPDATE });
    const current = rows.find((r) => r.role === 'owner') ?? null;
    if (actor.role !== 'admin' && current?.userId !== actor.id) {
      throw forbidden('Only the project owner or an admin may hand over ownership');
    }
    const target = rows.find((r) => r.userId === userId);
    if (!target) throw new AppError(400, 'validation_failed', 'userId: must be a member of this project', [{ path: 'userId', message: 'must be a member of this project' }]);
    const user = await User.findByPk(userId, { transaction });
    if (!user || !user.active || (user.role !== 'interpreter' && user.role !== 'admin')) {
      const message = 'the owner must be an active interpreter or admin';
      throw new AppError(400, 'validation_failed', `userId: ${message}`, [{ path: 'userId', message }]);
    }
    if (current?.userId === userId) return;
    // Demote first: at most one owner per project (unique partial index).
    if (current) await current.update({ role: 'member' }, { transaction });
    await target.update({ role: 'owner' }, { transaction });
    await audit(actor.id, 'project.owner.transfer', 'project', projectId, { from: current?.userId ?? null, to: userId }, transaction);
  });
  return projectDetail(actor, projectId);
}
