/**
 * Note pins and their threads on a section: list, open a thread (a pin and
 * its first message), reply, edit and delete one's own message (an edit is
 * marked, a delete keeps a tombstone), resolve and reopen; mentions checked
 * against the project's members; notifications for mentions and replies.
 *
 * Access: every member of the section's project, whatever their role
 * (interpreters, reviewers, curators), and admins, may read and comment;
 * non-members get 404. Only the author edits or deletes a message.
 *
 * Pins anchored to an object of a buildup follow it: `refreshNoteAnchors`
 * runs inside every buildup save and keeps the last known position; when the
 * object (or its buildup) is gone the thread is marked `objectRemoved` and
 * stays where it was last seen.
 */
import { Op, type Transaction } from 'sequelize';
import { ctx } from '../context';
import { AppError, forbidden, notFound } from '../errors';
import { ProjectMember, User } from '../models/index';
import { Buildup } from '../models/buildup';
import { Section } from '../models/section';
import { NoteMessage, NoteThread } from '../models/note';
import { sectionForViewer } from './section-access';
import { type Actor } from './project.service';
import { audit } from './audit.service';
import { notify } from './notify.service';
import { anchorPositionInGeometry, type NoteObjectRef } from '../../shared/notes/anchor';
import type { BuildupGeometry } from '../../shared/editor/model';
import {
  NOTE_BODY_MAX,
  type CreateThreadInput,
  type MessageInput,
  type NoteMessageView,
  type NotePerson,
  type NoteThreadView,
} from '../../shared/schemas/notes';

type Parsed<T> = Required<Pick<T, keyof T>>;
type CreateThread = Parsed<CreateThreadInput> & { mentions: number[] };
type MessageBody = Parsed<MessageInput> & { mentions: number[] };

const invalid = (code: string, path: string, message: string) => new AppError(422, code, `${path}: ${message}`, [{ path, message }]);

/** Link to a thread on the interpret page (used in notifications). */
export const threadLink = (sectionId: number, threadId: number) => `/sections/${sectionId}/interpret?thread=${threadId}`;

// ---- views -------------------------------------------------------------------

async function peopleById(ids: Iterable<number | null | undefined>, transaction?: Transaction): Promise<Map<number, NotePerson>> {
  const want = [...new Set([...ids].filter((x): x is number => typeof x === 'number'))];
  const out = new Map<number, NotePerson>();
  if (!want.length) return out;
  for (const u of await User.findAll({ where: { id: want }, attributes: ['id', 'name'], transaction })) out.set(u.id, { id: u.id, name: u.name });
  return out;
}

function messageView(m: NoteMessage, people: Map<number, NotePerson>): NoteMessageView {
  const deleted = !!m.deletedAt;
  return {
    id: m.id,
    threadId: m.threadId,
    author: m.authorId !== null ? (people.get(m.authorId) ?? null) : null,
    body: deleted ? '' : m.body,
    mentions: deleted ? [] : (m.mentions ?? []).map((id) => people.get(id)).filter((p): p is NotePerson => !!p),
    createdAt: m.createdAt.toISOString(),
    editedAt: m.editedAt ? m.editedAt.toISOString() : null,
    deletedAt: m.deletedAt ? m.deletedAt.toISOString() : null,
  };
}

async function threadViews(threads: NoteThread[], transaction?: Transaction): Promise<NoteThreadView[]> {
  if (!threads.length) return [];
  const messages = await NoteMessage.findAll({ where: { threadId: threads.map((t) => t.id) }, order: [['id', 'ASC']], transaction });
  const ids: number[] = [];
  for (const t of threads) ids.push(...[t.createdById, t.resolvedById].filter((x): x is number => x !== null));
  for (const m of messages) {
    if (m.authorId !== null) ids.push(m.authorId);
    ids.push(...(m.mentions ?? []));
  }
  const people = await peopleById(ids, transaction);
  const buildupIds = threads.map((t) => t.buildupId).filter((x): x is number => x !== null);
  const names = new Map<number, string>();
  if (buildupIds.length) for (const b of await Buildup.findAll({ where: { id: buildupIds }, attributes: ['id', 'name'], transaction })) names.set(b.id, b.name);
  const byThread = new Map<number, NoteMessage[]>();
  for (const m of messages) byThread.set(m.threadId, [...(byThread.get(m.threadId) ?? []), m]);
  return threads.map((t) => ({
    id: t.id,
    sectionId: t.sectionId,
    number: t.number,
    anchor:
      t.anchorKind === 'object' && t.objectRef
        ? {
            kind: 'object' as const,
            buildupId: t.buildupId,
            object: t.objectRef.object,
            cycleId: t.objectRef.cycleId ?? null,
            terminationId: t.objectRef.terminationId ?? null,
            buildupName: t.buildupId !== null ? (names.get(t.buildupId) ?? null) : null,
          }
        : { kind: 'point' as const },
    at: [t.at[0], t.at[1]],
    objectRemoved: t.objectRemoved,
    resolved: !!t.resolvedAt,
    resolvedAt: t.resolvedAt ? t.resolvedAt.toISOString() : null,
    resolvedBy: t.resolvedById !== null && t.resolvedById !== undefined ? (people.get(t.resolvedById) ?? null) : null,
    createdBy: t.createdById !== null ? (people.get(t.createdById) ?? null) : null,
    createdAt: t.createdAt.toISOString(),
    updatedAt: t.updatedAt.toISOString(),
    messages: (byThread.get(t.id) ?? []).map((m) => messageView(m, people)),
  }));
}

async function threadView(id: number, transaction?: Transaction): Promise<NoteThreadView> {
  const t = await NoteThread.findByPk(id, { transaction });
  if (!t) throw notFound('Thread');
  return (await threadViews([t], transaction))[0];
}

// ---- access ------------------------------------------------------------------

/** A thread the actor may see and comment on (any member of its project, admins); 404 otherwise. */
async function threadForMember(actor: Actor, id: number): Promise<{ thread: NoteThread; section: Section }> {
  const thread = await NoteThread.findByPk(id);
  if (!thread) throw notFound('Thread');
  const section = await sectionForViewer(actor, thread.sectionId).catch(() => {
    throw notFound('Thread');
  });
  return { thread, section };
}

// ---- checks --------------------------------------------------------------------

function checkBody(body: string): string {
  if (body.length > NOTE_BODY_MAX) throw invalid('body_too_long', 'body', `must be at most ${NOTE_BODY_MAX} characters (it has ${body.length})`);
  return body;
}

/** Mentioned ids: each must be a member of the project (422 naming `mentions[i]`); duplicates dropped. */
async function checkMentions(projectId: number, mentions: number[], transaction?: Transaction): Promise<number[]> {
  if (!mentions.length) return [];
  const members = new Set((await ProjectMember.findAll({ where: { projectId, userId: [...new Set(mentions)] }, attributes: ['userId'], transaction })).map((m) => m.userId));
  mentions.forEach((id, i) => {
    if (!members.has(id)) throw invalid('unknown_mention', `mentions[${i}]`, `user ${id} is not a member of this project`);
  });
  return [...new Set(mentions)];
}

/** The position of an anchor on the section, or 422 naming the anchor field that is wrong. */
async function resolveAnchor(section: Section, anchor: CreateThread['anchor'], transaction: Transaction) {
  if (anchor.kind === 'point') {
    const [u, v] = anchor.at;
    if (u < 0 || v < 0 || u > section.width || v > section.height)
      throw invalid('anchor_outside', 'anchor.at', `[${u}, ${v}] lies outside the image (0…${section.width} × 0…${section.height} px)`);
    return { anchorKind: 'point' as const, buildupId: null, objectRef: null, at: [u, v] as [number, number] };
  }
  const b = await Buildup.findByPk(anchor.buildupId, { transaction });
  if (!b || b.sectionId !== section.id) throw invalid('anchor_not_found', 'anchor.buildupId', `no buildup ${anchor.buildupId} on this section`);
  const ref: NoteObjectRef = { buildupId: b.id, object: anchor.object };
  if (anchor.object === 'termination') {
    if (!anchor.terminationId) throw invalid('anchor_not_found', 'anchor.terminationId', 'is required for a Termination stamp');
    ref.terminationId = anchor.terminationId;
  } else if (anchor.object !== 'buildup') {
    if (!anchor.cycleId) throw invalid('anchor_not_found', 'anchor.cycleId', `is required for a ${anchor.object}`);
    ref.cycleId = anchor.cycleId;
  }
  const at = anchorPositionInGeometry(b.geometry, ref);
  if (!at) {
    const path = anchor.object === 'termination' ? 'anchor.terminationId' : anchor.object === 'buildup' ? 'anchor.buildupId' : 'anchor.cycleId';
    throw invalid('anchor_not_found', path, `the buildup "${b.name}" has no such ${anchor.object === 'buildup' ? 'traced geometry' : anchor.object} (save the buildup first)`);
  }
  return { anchorKind: 'object' as const, buildupId: b.id, objectRef: ref, at };
}

// ---- notifications -------------------------------------------------------------------

async function tell(
  actor: Actor,
  section: Section,
  thread: NoteThread,
  text: string,
  mentioned: number[],
  replyTo: number[],
  transaction: Transaction,
) {
  const me = await User.findByPk(actor.id, { attributes: ['id', 'name'], transaction });
  const who = me?.name ?? 'Someone';
  const link = threadLink(section.id, thread.id);
  const excerpt = text.length > 400 ? `${text.slice(0, 400)}…` : text;
  const mentionIds = mentioned.filter((id) => id !== actor.id);
  if (mentionIds.length)
    await notify(
      { kind: 'mention', recipientIds: mentionIds, actorId: actor.id, projectId: section.projectId, subject: `${who} mentioned you in Note ${thread.number} on ${section.title}`, text: excerpt, link },
      transaction,
    );
  const replyIds = [...new Set(replyTo)].filter((id) => id !== actor.id && !mentioned.includes(id));
  if (replyIds.length)
    await notify(
      { kind: 'reply', recipientIds: replyIds, actorId: actor.id, projectId: section.projectId, subject: `${who} replied in Note ${thread.number} on ${section.title}`, text: excerpt, link },
      transaction,
    );
}

// ---- threads -------------------------------------------------------------------------

export async function listThreads(actor: Actor, sectionId: number): Promise<NoteThreadView[]> {
  await sectionForViewer(actor, sectionId);
  const threads = await NoteThread.findAll({ where: { sectionId }, order: [['number', 'ASC']] });
  return threadViews(threads);
}

export async function getThread(actor: Actor, id: number): Promise<NoteThreadView> {
  const { thread } = await threadForMember(actor, id);
  return (await threadViews([thread]))[0];
}

export async function createThread(actor: Actor, sectionId: number, input: CreateThread): Promise<NoteThreadView> {
  const section = await sectionForViewer(actor, sectionId);
  const body = checkBody(input.body);
  return ctx().sequelize.transaction(async (transaction) => {
    const mentions = await checkMentions(section.projectId, input.mentions, transaction);
    // the section row lock serialises numbering; the unique index backs it up
    await Section.findByPk(sectionId, { transaction, lock: transaction.LOCK.UPDATE });
    const anchor = await resolveAnchor(section, input.anchor, transaction);
    const last = (await NoteThread.max('number', { where: { sectionId }, transaction })) as number | null;
    const thread = await NoteThread.create({ sectionId, number: (last ?? 0) + 1, ...anchor, createdById: actor.id }, { transaction });
    const msg = await NoteMessage.create({ threadId: thread.id, authorId: actor.id, body, mentions }, { transaction });
    await audit(actor.id, 'note.thread.create', 'note_thread', thread.id, { sectionId, number: thread.number, anchor: input.anchor, messageId: msg.id, mentions }, transaction);
    await tell(actor, section, thread, body, mentions, [], transaction);
    return threadView(thread.id, transaction);
  });
}

export async function setResolved(actor: Actor, id: number, resolved: boolean): Promise<NoteThreadView> {
  await threadForMember(actor, id);
  return ctx().sequelize.transaction(async (transaction) => {
    const t = (await NoteThread.findByPk(id, { transaction, lock: transaction.LOCK.UPDATE }))!;
    if (!!t.resolvedAt !== resolved) {
      t.set(resolved ? { resolvedAt: new Date(), resolvedById: actor.id } : { resolvedAt: null, resolvedById: null });
      await t.save({ transaction });
      await audit(actor.id, resolved ? 'note.thread.resolve' : 'note.thread.reopen', 'note_thread', t.id, { number: t.number }, transaction);
    }
    return threadView(t.id, transaction);
  });
}

// ---- messages -------------------------------------------------------------------------

export async function addMessage(actor: Actor, threadId: number, input: MessageBody): Promise<NoteMessageView> {
  const { section } = await threadForMember(actor, threadId);
  const body = checkBody(input.body);
  return ctx().sequelize.transaction(async (transaction) => {
    const thread = (await NoteThread.findByPk(threadId, { transaction, lock: transaction.LOCK.UPDATE }))!;
    const mentions = await checkMentions(section.projectId, input.mentions, transaction);
    const earlier = await NoteMessage.findAll({ where: { threadId }, attributes: ['authorId'], transaction });
    const msg = await NoteMessage.create({ threadId, authorId: actor.id, body, mentions }, { transaction });
    thread.changed('updatedAt', true);
    await thread.save({ transaction });
    await audit(actor.id, 'note.message.create', 'note_message', msg.id, { threadId, mentions }, transaction);
    await tell(actor, section, thread, body, mentions, earlier.map((m) => m.authorId).filter((x): x is number => x !== null), transaction);
    const people = await peopleById([actor.id, ...mentions], transaction);
    return messageView(msg, people);
  });
}

async function ownMessage(actor: Actor, id: number, transaction: Transaction) {
  const m = await NoteMessage.findByPk(id, { transaction, lock: transaction.LOCK.UPDATE });
  if (!m) throw notFound('Message');
  const { section, thread } = await threadForMember(actor, m.threadId).catch(() => {
    throw notFound('Message');
  });
  if (m.authorId !== actor.id) throw forbidden('Only its author may change or delete a message');
  if (m.deletedAt) throw new AppError(409, 'message_deleted', 'This message was deleted; it cannot be changed');
  return { m, section, thread };
}

export async function editMessage(actor: Actor, id: number, input: MessageBody): Promise<NoteMessageView> {
  const body = checkBody(input.body);
  return ctx().sequelize.transaction(async (transaction) => {
    const { m, section, thread } = await ownMessage(actor, id, transaction);
    const mentions = await checkMentions(section.projectId, input.mentions, transaction);
    const added = mentions.filter((x) => !(m.mentions ?? []).includes(x));
    if (body !== m.body || mentions.length !== (m.mentions ?? []).length || added.length) {
      m.set({ body, mentions, editedAt: new Date() });
      await m.save({ transaction });
      await audit(actor.id, 'note.message.edit', 'note_message', m.id, { threadId: m.threadId, mentions }, transaction);
      // only people newly mentioned by the edit hear of it
      await tell(actor, section, thread, body, added, [], transaction);
    }
    return messageView(m, await peopleById([m.authorId, ...mentions], transaction));
  });
}

export async function deleteMessage(actor: Actor, id: number): Promise<NoteMessageView> {
  return ctx().sequelize.transaction(async (transaction) => {
    const { m } = await ownMessage(actor, id, transaction);
    m.set({ deletedAt: new Date() });
    await m.save({ transaction });
    await audit(actor.id, 'note.message.delete', 'note_message', m.id, { threadId: m.threadId }, transaction);
    return messageView(m, await peopleById([m.authorId], transaction));
  });
}

// ---- hooks of the buildup service ------------------------------------------------------

/**
 * After a buildup save (inside its transaction): object pins of the buildup
 * move to the object's new position; a pin whose object is gone keeps its
 * last position and is marked removed (and unmarked if the object comes back).
 */
export async function refreshNoteAnchors(buildupId: number, geometry: BuildupGeometry, transaction: Transaction): Promise<void> {
  const threads = await NoteThread.findAll({ where: { buildupId, anchorKind: 'object' }, transaction, lock: transaction.LOCK.UPDATE });
  for (const t of threads) {
    if (!t.objectRef) continue;
    const at = anchorPositionInGeometry(geometry, t.objectRef);
    if (at) {
      if (at[0] !== t.at[0] || at[1] !== t.at[1] || t.objectRemoved) {
        t.set({ at, objectRemoved: false });
        await t.save({ transaction });
      }
    } else if (!t.objectRemoved) {
      t.set({ objectRemoved: true });
      await t.save({ transaction });
    }
  }
}

/** When a buildup is deleted (inside its transaction): its object pins stay, marked removed, at their last position. */
export async function markBuildupNotesRemoved(buildupId: number, transaction: Transaction): Promise<void> {
  await NoteThread.update({ objectRemoved: true }, { where: { buildupId, anchorKind: 'object', objectRemoved: { [Op.not]: true } }, transaction });
}
