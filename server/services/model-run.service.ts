/**
 * Saved runs of the growth forward model per buildup (shared/schemas/model-runs.ts).
 * Project members (any role) and admins read; interpreter members and admins
 * save and delete (`assertCanEdit`). The parameters are checked with the
 * model's own schema (422 `invalid_model_params`, each path under `params.`);
 * the stored parameters are the parsed ones (defaults filled in), so a saved
 * run replays exactly. Every write and its audit line share one transaction.
 */
import { Buildup } from '../models/buildup';
import { ModelRun } from '../models/model-run';
import { User } from '../models/index';
import { AppError, notFound } from '../errors';
import { assertCanEdit, type Actor } from './project.service';
import { sectionForViewer } from './section-access';
import { audit } from './audit.service';
import { ctx } from '../context';
import { forwardModelParamsSchema } from '../../shared/schemas/forward-model';
import { formatIssuePath } from '../../shared/api-errors';
import type { ModelRunCreateInput, ModelRunDetail, ModelRunListItem } from '../../shared/schemas/model-runs';
import { modelRunCreateSchema } from '../../shared/schemas/model-runs';

type CreateBody = ReturnType<typeof modelRunCreateSchema.parse>;

async function buildupForViewer(actor: Actor, id: number): Promise<{ buildup: Buildup; projectId: number }> {
  const buildup = Number.isInteger(id) ? await Buildup.findByPk(id) : null;
  if (!buildup) throw notFound('Buildup');
  const section = await sectionForViewer(actor, buildup.sectionId).catch(() => {
    throw notFound('Buildup');
  });
  return { buildup, projectId: section.projectId };
}

async function runForViewer(actor: Actor, id: number): Promise<{ run: ModelRun; projectId: number }> {
  const run = Number.isInteger(id) ? await ModelRun.findByPk(id, { include: [{ model: User, as: 'createdBy', attributes: ['id', 'name'] }] }) : null;
  if (!run) throw notFound('Model run');
  const { projectId } = await buildupForViewer(actor, run.buildupId).catch(() => {
    throw notFound('Model run');
  });
  return { run, projectId };
}

function listItem(r: ModelRun): ModelRunListItem {
  return {
    id: r.id,
    buildupId: r.buildupId,
    name: r.name,
    profileSource: r.profileSource,
    summary: r.summary,
    createdBy: r.createdBy ? { id: r.createdBy.id, name: r.createdBy.name } : null,
    createdAt: r.createdAt.toISOString(),
  };
}

const detail = (r: ModelRun): ModelRunDetail => ({ ...listItem(r), params: r.params, depthOffsetM: r.depthOffsetM });

export async function listRuns(actor: Actor, buildupId: number): Promise<{ items: ModelRunListItem[] }> {
  await buildupForViewer(actor, buildupId);
  const rows = await ModelRun.findAll({
    where: { buildupId },
    include: [{ model: User, as: 'createdBy', attributes: ['id', 'name'] }],
    order: [['createdAt', 'DESC'], ['id', 'DESC']],
    limit: 500,
  });
  return { items: rows.map(listItem) };
}

export async function getRun(actor: Actor, id: number): Promise<ModelRunDetail> {
  return detail((await runForViewer(actor, id)).run);
}

/** Check the model parameters; a refusal names every bad field under `params.`. */
function parseParams(params: unknown) {
  const r = forwardModelParamsSchema.safeParse(params);
  if (r.success) return r.data;
  const details = r.error.issues.map((i) => ({ path: formatIssuePath(['params', ...i.path]), message: i.message }));
  throw new AppError(422, 'invalid_model_params', details.map((d) => `${d.path}: ${d.message}`).join('; '), details);
}

export async function createRun(actor: Actor, buildupId: number, body: CreateBody | ModelRunCreateInput): Promise<ModelRunDetail> {
  const { projectId } = await buildupForViewer(actor, buildupId);
  await assertCanEdit(actor, projectId);
  const b = modelRunCreateSchema.parse(body);
  const params = parseParams(b.params);
  const id = await ctx().sequelize.transaction(async (transaction) => {
    const row = await ModelRun.create(
      { buildupId, name: b.name, params, profileSource: b.profileSource, depthOffsetM: b.depthOffsetM, summary: b.summary, createdById: actor.id },
      { transaction },
    );
    await audit(actor.id, 'model_run.create', 'model_run', row.id, { buildupId, name: b.name }, transaction);
    return row.id;
  });
  return getRun(actor, id);
}

export async function deleteRun(actor: Actor, id: number): Promise<void> {
  const { run, projectId } = await runForViewer(actor, id);
  await assertCanEdit(actor, projectId);
  await ctx().sequelize.transaction(async (transaction) => {
    await ModelRun.destroy({ where: { id: run.id }, transaction });
    await audit(actor.id, 'model_run.delete', 'model_run', run.id, { buildupId: run.buildupId, name: run.name }, transaction);
  });
}
