/**
 * Review of buildup interpretations: the state machine (Draft → Out for
 * review → Needs rework | Signed off; a save returns Needs rework and Out for
 * review to Draft; Signed off → Draft only by a reopen with a reason), the
 * freeze of signed-off buildups, and the kept versions (one row per save, with
 * the velocity model, calibration version and vertical domain in force then,
 * so any version is rebuilt and measured exactly).
 *
 * The allowed transitions are the table in shared/schemas/review.ts; the
 * client shows its buttons from the same table.
 */
import { Op, type Transaction } from 'sequelize';
import { Buildup, SectionVelocity } from '../models/buildup';
import { Section, SectionCalibration } from '../models/section';
import { ProjectMember, User } from '../models/index';
import { BuildupVersion, ReviewTransition } from '../models/review';
import { AppError, forbidden, notFound } from '../errors';
import { assertCanEdit, type Actor } from './project.service';
import { sectionForViewer } from './section-access';
import { audit } from './audit.service';
import { notify } from './notify.service';
import { ctx } from '../context';
import { MeasureInputError, type MeasurementOutput } from '../../shared/measure/index';
import { measureWorkProblem } from '../../shared/schemas/measure-limits';
import { measureOffLoop } from '../measure/pool';
import { cachedMeasurement, stableJson } from '../measure/cache';
import { fromGeometry, toInterpretationInput, ModelError, type VelocityModel } from '../../shared/editor/model';
import { DEFAULT_VELOCITY } from '../../shared/schemas/buildups';
import {
  REVIEW_STATE_LABELS,
  RETURNS_TO_DRAFT_ON_SAVE,
  allowedTransitions,
  findTransition,
  roleMayTake,
  type BuildupVersionDetail,
  type BuildupVersionSummary,
  type ReviewInfo,
  type ReviewState,
  type ReviewTransitionInput,
  type UserRef,
} from '../../shared/schemas/review';

const userRef = (u: User | null | undefined): UserRef | null => (u ? { id: u.id, name: u.name } : null);

async function loadForViewer(actor: Actor, id: number): Promise<{ buildup: Buildup; section: Section }> {
  const buildup = Number.isInteger(id) ? await Buildup.findByPk(id) : null;
  if (!buildup) throw notFound('Buildup');
  const section = await sectionForViewer(actor, buildup.sectionId).catch(() => {
    throw notFound('Buildup');
  });
  return { buildup, section };
}

const linkTo = (b: Buildup) => `/sections/${b.sectionId}/interpret?buildup=${b.id}`;

// ---- versions ------------------------------------------------------------------

/** What a buildup's numbers depend on besides its geometry: the section's velocity model, calibration version and vertical domain now. */
async function sectionContext(sectionId: number, transaction?: Transaction) {
  const section = await Section.findByPk(sectionId, { transaction });
  const velocity = await SectionVelocity.findByPk(sectionId, { transaction });
  const calibrationVersion = (await SectionCalibration.max('version', { where: { sectionId }, transaction })) as number | null;
  return { velocity: (velocity?.model as VelocityModel | undefined) ?? null, calibrationVersion: calibrationVersion ?? null, verticalDomain: section!.verticalDomain };
}

/** Keep the buildup as just saved (or created) as a version row, with the context its numbers depend on. */
export async function recordVersion(b: Buildup, actorId: number | null, transaction?: Transaction, note: string | null = null): Promise<void> {
  const context = await sectionContext(b.sectionId, transaction);
  await BuildupVersion.create({ buildupId: b.id, version: b.version, name: b.name, geometry: b.geometry, ...context, note, savedById: actorId, savedAt: new Date() }, { transaction });
}

/**
 * Before a sign-off (row locked): when the section's velocity model, Ties or
 * vertical domain changed after the current version was saved, the numbers
 * under review are not that version's. Keep the same geometry as a new
 * version under the section's current context (attributed to nobody, so no
 * new author) and sign that one off.
 */
async function pinContextForSignOff(b: Buildup, transaction: Transaction): Promise<void> {
  const kept = await BuildupVersion.findOne({ where: { buildupId: b.id, version: b.version }, transaction });
  const now = await sectionContext(b.sectionId, transaction);
  const changed: string[] = [];
  if (!kept || stableJson(kept.velocity) !== stableJson(now.velocity)) changed.push('velocity model');
  if (!kept || kept.calibrationVersion !== now.calibrationVersion) changed.push('Ties');
  if (!kept || kept.verticalDomain !== now.verticalDomain) changed.push('vertical domain');
  if (!changed.length) return;
  const from = b.version;
  b.set({ version: b.version + 1 });
  await b.save({ transaction, silent: true });
  await recordVersion(b, null, transaction, `Kept at sign-off: the section's ${changed.join(', ')} changed after version ${from} was saved`);
}

/** The newest version up to `upTo` that was a save (versions kept for another reason carry a note and repeat the geometry before them). */
async function lastSavedVersion(buildupId: number, upTo: number): Promise<number> {
  const v = await BuildupVersion.findOne({
    where: { buildupId, version: { [Op.lte]: upTo }, note: null },
    attributes: ['version'],
    order: [['version', 'DESC']],
  });
  return v?.version ?? upTo;
}

/** The creator and everyone who saved a version. */
async function authorIds(b: Buildup, transaction?: Transaction): Promise<number[]> {
  const rows = await BuildupVersion.findAll({ where: { buildupId: b.id, savedById: { [Op.ne]: null } }, attributes: ['savedById'], group: ['savedById'], transaction });
  const ids = new Set<number>(rows.map((r) => r.savedById!));
  if (b.createdById) ids.add(b.createdById);
  return [...ids];
}

/** The project's reviewers (members with the reviewer role): told when a buildup is sent for review. */
async function projectReviewerIds(projectId: number, transaction?: Transaction): Promise<number[]> {
  const rows = await ProjectMember.findAll({ where: { projectId }, attributes: ['userId'], include: [{ model: User, as: 'user', attributes: ['id'], where: { role: 'reviewer', active: true } }], transaction });
  return rows.map((r) => r.userId);
}

/** Everyone who took a reviewer's transition (rework, sign-off, reopen) on this buildup. */
async function reviewerIds(b: Buildup, transaction?: Transaction): Promise<number[]> {
  const rows = await ReviewTransition.findAll({ where: { buildupId: b.id }, attributes: ['fromState', 'toState', 'actorId'], transaction });
  const ids = new Set<number>();
  for (const r of rows) {
    const rule = findTransition(r.fromState, r.toState);
    if (rule?.who === 'reviewer' && r.actorId) ids.add(r.actorId);
  }
  return [...ids];
}

// ---- freeze --------------------------------------------------------------------

/** 409 `signed_off` naming who signed which version and how to reopen it. */
export async function signedOffError(b: Buildup, transaction?: Transaction): Promise<AppError> {
  const by = b.signedOffById ? await User.findByPk(b.signedOffById, { attributes: ['id', 'name'], transaction }) : null;
  const at = b.signedOffAt ? b.signedOffAt.toISOString() : null;
  const when = at ? ` on ${at.slice(0, 10)}` : '';
  return new AppError(
    409,
    'signed_off',
    `"${b.name}" is signed off (version ${b.signedOffVersion} by ${by?.name ?? 'a former account'}${when}) and cannot change. ` +
      'A reviewer or an admin of the project reopens it, with a reason, before anyone edits it again.',
    { buildupId: b.id, name: b.name, version: b.signedOffVersion, signedOffBy: userRef(by), signedOffAt: at },
  );
}

/** Refuse a change of a buildup (row already locked by the caller) while it is signed off. */
export async function assertNotSignedOff(b: Buildup, transaction?: Transaction): Promise<void> {
  if (b.reviewState === 'signed_off') throw await signedOffError(b, transaction);
}

/** Refuse a change of the section's velocity model while one of its buildups is signed off (rows locked). */
export async function assertSectionNotFrozen(sectionId: number, transaction: Transaction): Promise<void> {
  const frozen = await Buildup.findAll({ where: { sectionId, reviewState: 'signed_off' }, order: [['id', 'ASC']], lock: transaction.LOCK.UPDATE, transaction });
  if (!frozen.length) return;
  const first = await signedOffError(frozen[0], transaction);
  const names = frozen.map((b) => `"${b.name}"`).join(', ');
  throw new AppError(
    409,
    'signed_off',
    `The velocity model of this section cannot change while ${names} ${frozen.length > 1 ? 'are' : 'is'} signed off. ${first.message}`,
    { ...(first.details as object), buildupIds: frozen.map((b) => b.id) },
  );
}

/**
 * After a save (row locked, new version already in `b`): keep the version and,
 * when the buildup was Out for review or Needs rework, return it to Draft,
 * recorded as a transition by the saver.
 */
export async function afterSave(actor: Actor, b: Buildup, transaction: Transaction): Promise<void> {
  await recordVersion(b, actor.id, transaction);
  const from = b.reviewState;
  if (!RETURNS_TO_DRAFT_ON_SAVE.includes(from)) return;
  b.set({ reviewState: 'draft' });
  await b.save({ transaction, silent: true });
  await writeTransition(actor, b, from, 'draft', null, transaction);
}

async function writeTransition(actor: Actor, b: Buildup, from: ReviewState, to: ReviewState, comment: string | null, transaction: Transaction) {
  const row = await ReviewTransition.create({ buildupId: b.id, fromState: from, toState: to, buildupVersion: b.version, actorId: actor.id, comment }, { transaction });
  await audit(actor.id, 'buildup.review', 'buildup', b.id, { from, to, version: b.version, comment }, transaction);
  const actorName = (await User.findByPk(actor.id, { attributes: ['name'], transaction }))?.name ?? 'Someone';
  const section = await Section.findByPk(b.sectionId, { attributes: ['projectId'], transaction });
  const what = from === 'signed_off' ? 'reopened' : to === 'draft' ? 'saved a change to' : `moved to ${REVIEW_STATE_LABELS[to]}:`;
  await notify(
    {
      kind: 'review_state',
      recipientIds: [
        ...(await authorIds(b, transaction)),
        ...(await reviewerIds(b, transaction)),
        // sent for review: every reviewer of the project hears of it, not only those who acted on it before
        ...(to === 'out_for_review' ? await projectReviewerIds(section!.projectId, transaction) : []),
      ],
      actorId: actor.id,
      projectId: section!.projectId,
      subject: `${actorName} ${what} ${b.name} (${REVIEW_STATE_LABELS[from]} → ${REVIEW_STATE_LABELS[to]}, version ${b.version})`,
      text: comment ?? '',
      link: linkTo(b),
    },
    transaction,
  );
  return row;
}

// ---- transitions -----------------------------------------------------------------

const bad = (path: string, message: string) => new AppError(400, 'validation_failed', `${path}: ${message}`, [{ path, message }]);

/**
 * `POST /api/buildups/:id/review`. Order of refusals: 404 not a member;
 * 409 `transition_not_allowed` (no such transition in the table); 403
 * `forbidden` (role); 400 `reason` missing for a reopen; then under a row lock
 * 409 `state_changed` (the state is no longer `from`: someone else moved it
 * first) and 403 `own_work` (an author signing off).
 */
export async function transition(actor: Actor, id: number, input: ReviewTransitionInput): Promise<ReviewInfo> {
  const { buildup: found, section } = await loadForViewer(actor, id);
  const rule = findTransition(input.from, input.to);
  if (!rule) {
    const bySave = input.to === 'draft' && RETURNS_TO_DRAFT_ON_SAVE.includes(input.from);
    throw new AppError(
      409,
      'transition_not_allowed',
      `A buildup cannot go from ${REVIEW_STATE_LABELS[input.from]} to ${REVIEW_STATE_LABELS[input.to]} this way${bySave ? ': the next save returns it to Draft' : ''}`,
      { from: input.from, to: input.to },
    );
  }
  if (rule.who === 'editor') await assertCanEdit(actor, section.projectId);
  else if (!roleMayTake(rule, actor.role)) throw forbidden(`Only reviewers who are members of the project, or admins, may ${rule.label.toLowerCase()}`);
  const reason = input.reason || null;
  const comment = input.comment || null;
  if (rule.reasonRequired && !reason) throw bad('reason', 'is required to reopen a signed-off buildup');

  await ctx().sequelize.transaction(async (transaction) => {
    const b = await Buildup.findByPk(found.id, { transaction, lock: transaction.LOCK.UPDATE });
    if (!b) throw notFound('Buildup');
    if (b.reviewState !== input.from) {
      throw new AppError(409, 'state_changed', `Someone moved "${b.name}" to ${REVIEW_STATE_LABELS[b.reviewState as ReviewState]} meanwhile (you saw ${REVIEW_STATE_LABELS[input.from]}); reload and decide again`, {
        from: input.from,
        to: input.to,
        current: b.reviewState,
      });
    }
    if (rule.notByAuthor && (await authorIds(b, transaction)).includes(actor.id)) {
      throw new AppError(403, 'own_work', `You created or saved "${b.name}": someone else signs off your own work`);
    }
    if (input.to === 'signed_off') {
      await pinContextForSignOff(b, transaction);
      b.set({ signedOffVersion: b.version, signedOffById: actor.id, signedOffAt: new Date() });
    }
    if (input.from === 'signed_off') b.set({ signedOffVersion: null, signedOffById: null, signedOffAt: null });
    b.set({ reviewState: input.to });
    await b.save({ transaction, silent: true });
    await writeTransition(actor, b, input.from, input.to, rule.reasonRequired ? reason : (comment ?? reason), transaction);
  });
  return getReview(actor, id);
}

/** `GET /api/buildups/:id/review`: state, the current sign-off, authors, what the asker may do, history. */
export async function getReview(actor: Actor, id: number): Promise<ReviewInfo> {
  const { buildup: b } = await loadForViewer(actor, id);
  const history = await ReviewTransition.findAll({
    where: { buildupId: b.id },
    include: [{ model: User, as: 'actor', attributes: ['id', 'name'] }],
    order: [['id', 'ASC']],
  });
  const authors = await authorIds(b);
  const people = authors.length ? await User.findAll({ where: { id: authors }, attributes: ['id', 'name'], order: [['name', 'ASC']] }) : [];
  const signer = b.signedOffById ? await User.findByPk(b.signedOffById, { attributes: ['id', 'name'] }) : null;
  const isAuthor = authors.includes(actor.id);
  const allowed = allowedTransitions(b.reviewState, actor.role, isAuthor);
  return {
    buildupId: b.id,
    sectionId: b.sectionId,
    name: b.name,
    state: b.reviewState,
    version: b.version,
    signedOff:
      b.reviewState === 'signed_off' && b.signedOffVersion !== null
        ? { version: b.signedOffVersion, savedVersion: await lastSavedVersion(b.id, b.signedOffVersion), by: userRef(signer), at: b.signedOffAt!.toISOString() }
        : null,
    authors: people.map((u) => ({ id: u.id, name: u.name })),
    allowed: allowed.map((t) => ({ to: t.to, label: t.label, reasonRequired: !!t.reasonRequired })),
    history: history.map((h) => ({
      id: h.id,
      from: h.fromState,
      to: h.toState,
      version: h.buildupVersion,
      by: userRef(h.actor),
      at: h.createdAt.toISOString(),
      comment: h.comment,
      bySave: h.toState === 'draft' && RETURNS_TO_DRAFT_ON_SAVE.includes(h.fromState),
    })),
  };
}

// ---- versions: list, one, measurements ---------------------------------------------------

async function signedOffVersions(buildupId: number): Promise<Set<number>> {
  const rows = await ReviewTransition.findAll({ where: { buildupId, toState: 'signed_off' }, attributes: ['buildupVersion'] });
  return new Set(rows.map((r) => r.buildupVersion));
}

function versionSummary(v: BuildupVersion, signed: Set<number>): BuildupVersionSummary {
  return {
    version: v.version,
    name: v.name,
    savedBy: userRef(v.savedBy),
    savedAt: v.savedAt.toISOString(),
    cycleCount: v.geometry.cycles.length,
    calibrationVersion: v.calibrationVersion,
    signedOff: signed.has(v.version),
    note: v.note,
  };
}

/** `GET /api/buildups/:id/versions`, newest first. */
export async function listVersions(actor: Actor, id: number): Promise<BuildupVersionSummary[]> {
  const { buildup } = await loadForViewer(actor, id);
  const rows = await BuildupVersion.findAll({
    where: { buildupId: buildup.id },
    include: [{ model: User, as: 'savedBy', attributes: ['id', 'name'] }],
    order: [['version', 'DESC']],
  });
  const signed = await signedOffVersions(buildup.id);
  return rows.map((v) => versionSummary(v, signed));
}

async function versionRow(actor: Actor, id: number, version: number): Promise<BuildupVersion> {
  const { buildup } = await loadForViewer(actor, id);
  const v = Number.isInteger(version) ? await BuildupVersion.findOne({ where: { buildupId: buildup.id, version }, include: [{ model: User, as: 'savedBy', attributes: ['id', 'name'] }] }) : null;
  if (!v) throw notFound('Version');
  return v;
}

/** `GET /api/buildups/:id/versions/:version`: the geometry exactly as saved, with its context. */
export async function getVersion(actor: Actor, id: number, version: number): Promise<BuildupVersionDetail> {
  const v = await versionRow(actor, id, version);
  return {
    ...versionSummary(v, await signedOffVersions(v.buildupId)),
    buildupId: v.buildupId,
    geometry: v.geometry,
    velocity: v.velocity,
    verticalDomain: v.verticalDomain,
  };
}

/**
 * `GET /api/buildups/:id/versions/:version/measurements`: the version's
 * numbers from its own geometry, velocity model (the house default when none
 * was stored), calibration version and vertical domain, on the measurement
 * pool and cache. Version rows never change, so neither do these numbers.
 */
export async function measureVersion(actor: Actor, id: number, version: number, options?: unknown): Promise<MeasurementOutput> {
  const v = await versionRow(actor, id, version);
  const section = await Section.findByPk((await Buildup.findByPk(v.buildupId))!.sectionId);
  if (v.calibrationVersion === null) throw new AppError(409, 'not_calibrated', `calibration: version ${v.version} was saved before the section had Ties; it cannot be measured`);
  const cal = await SectionCalibration.findOne({ where: { sectionId: section!.id, version: v.calibrationVersion } });
  if (!cal) throw new AppError(409, 'not_calibrated', `calibration: version ${v.calibrationVersion} of the section's Ties no longer exists`);
  const context = { calibrationTies: cal.ties, verticalDomain: v.verticalDomain, velocity: v.velocity ?? (DEFAULT_VELOCITY as VelocityModel) };
  const key = stableJson({ buildupVersion: [v.buildupId, v.version], calibration: [cal.id, cal.version], options: options ?? {} });
  try {
    return await cachedMeasurement(ctx().sequelize, key, async () => {
      const editor = fromGeometry({ id: v.buildupId, name: v.name, version: v.version, geometry: v.geometry });
      const input = toInterpretationInput(editor, context as Parameters<typeof toInterpretationInput>[1]);
      const tooMuch = measureWorkProblem(input, (options as { draws?: unknown } | undefined)?.draws, 'draws');
      if (tooMuch) throw new AppError(422, 'work_too_large', `${tooMuch.path}: ${tooMuch.message}`, [{ path: tooMuch.path, message: tooMuch.message }]);
      return measureOffLoop(input, options);
    });
  } catch (e) {
    if (e instanceof ModelError || e instanceof MeasureInputError) {
      throw new AppError(422, 'not_measurable', `${e.message}`, { path: (e as { path?: string }).path });
    }
    throw e;
  }
}
