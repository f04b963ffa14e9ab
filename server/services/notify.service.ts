/**
 * Notifications: one entry point for everything that tells people about
 * something (mentions, replies in a thread they took part in, review state
 * changes). Callers compute the recipients and call `notify` inside the
 * transaction that makes the change, so the notification rows commit or roll
 * back with it; e-mail is sent after the commit (immediate) or by the digest
 * job, according to each recipient's preference (`users.notify_mode`).
 *
 * E-mail state of a notification: 'pending' (to be mailed), 'sent', or
 * 'skipped' (the recipient chose "none" when it was made, or later).
 * A send claims its rows ('pending' → 'sent') before mailing and gives them
 * back if the mail server refused, so the immediate path and the digest never
 * mail the same notification twice.
 */
import { QueryTypes, type Transaction } from 'sequelize';
import { Notification } from '../models/notification';
import { User } from '../models/index';
import { ctx } from '../context';
import { logger } from '../logger';
import { NOTIFY_KINDS, type NotifyKind } from '../../shared/schemas/notifications';

export type { NotifyKind };

export interface NotifyEvent {
  kind: NotifyKind;
  /** Users to tell; the actor and duplicates are dropped by notify itself. */
  recipientIds: number[];
  actorId: number;
  projectId: number;
  /** Short line for the bell and the mail subject, e.g. "Ana mentioned you on Kestrel Knoll". */
  subject: string;
  /** Plain text body (the message excerpt, the comment of the transition). */
  text: string;
  /** App-relative link, e.g. `/sections/3/interpret?buildup=7&thread=12`. */
  link: string;
}

const KINDS: readonly NotifyKind[] = NOTIFY_KINDS;
const SUBJECT_MAX = 200;
const TEXT_MAX = 4000;
/** Pending notifications of people on "immediate" older than this are mailed by the digest run (a failed send, a changed preference). */
const IMMEDIATE_GRACE_MS = 10 * 60_000;

/** Mail sends started after a commit and not finished yet (tests and shutdown wait for them). */
const inFlight = new Set<Promise<unknown>>();

/** Resolves when every mail send started so far has finished. */
export async function mailSettled(): Promise<void> {
  while (inFlight.size) await Promise.allSettled([...inFlight]);
}

/** Keep a background mail send so `mailSettled()` waits for it. */
export function trackMail(p: Promise<unknown>) {
  track(p);
}

function track(p: Promise<unknown>) {
  inFlight.add(p);
  void p.finally(() => inFlight.delete(p));
}

/** A line of subject: no line breaks (a header), at most SUBJECT_MAX characters. */
function oneLine(s: string, max: number) {
  const flat = s.replace(/\s+/g, ' ').trim();
  return flat.length > max ? `${flat.slice(0, max - 1)}…` : flat;
}

export async function notify(event: NotifyEvent, transaction: Transaction): Promise<void> {
  if (!KINDS.includes(event.kind)) throw new Error(`notify: unknown kind "${event.kind}"`);
  if (!event.link.startsWith('/') || event.link.startsWith('//') || /\s/.test(event.link)) {
    throw new Error(`notify: the link must be an app-relative path, got "${event.link}"`);
  }
  const ids = [...new Set(event.recipientIds)].filter((id) => Number.isInteger(id) && id > 0 && id !== event.actorId);
  if (!ids.length) return;
  // Active people who are (still) members of the project, or admins (who see every project).
  const people = await ctx().sequelize.query<{ id: number; notify_mode: string }>(
    `SELECT u.id, u.notify_mode FROM users u
      WHERE u.id IN (:ids) AND u.active
        AND (u.role = 'admin' OR EXISTS (SELECT 1 FROM project_members m WHERE m.project_id = :projectId AND m.user_id = u.id))
      ORDER BY u.id`,
    { replacements: { ids, projectId: event.projectId }, type: QueryTypes.SELECT, transaction },
  );
  if (!people.length) return;
  const subject = oneLine(event.subject, SUBJECT_MAX);
  const text = event.text.length > TEXT_MAX ? `${event.text.slice(0, TEXT_MAX - 1)}…` : event.text;
  const created = await Notification.bulkCreate(
    people.map((p) => ({
      recipientId: p.id,
      kind: event.kind,
      projectId: event.projectId,
      actorId: event.actorId,
      subject,
      text,
      link: event.link,
      emailState: p.notify_mode === 'none' ? ('skipped' as const) : ('pending' as const),
    })),
    { transaction, returning: true },
  );
  const immediate = new Set(people.filter((p) => p.notify_mode === 'immediate').map((p) => p.id));
  const toMail = created.filter((n) => immediate.has(n.recipientId)).map((n) => n.id);
  if (toMail.length) {
    transaction.afterCommit(() => {
      track(sendImmediate(toMail).catch((err) => logger.warn({ err }, 'notification mail failed')));
    });
  }
}

const absolute = (link: string) => `${ctx().config.publicUrl.replace(/\/+$/, '')}${link}`;
const quote = (text: string) =>
  text
    .split(/\r?\n/)
    .map((l) => `> ${l}`)
    .join('\n');

/** Mark rows 'sent' if still 'pending'; the ids actually claimed. */
async function claim(ids: number[], transaction?: Transaction): Promise<number[]> {
  if (!ids.length) return [];
  const rows = await ctx().sequelize.query<{ id: string }>(
    `UPDATE notifications SET email_state = 'sent', emailed_at = now() WHERE id IN (:ids) AND email_state = 'pending' RETURNING id`,
    { replacements: { ids }, type: QueryTypes.SELECT, transaction },
  );
  return rows.map((r) => Number(r.id));
}

async function giveBack(ids: number[]) {
  await Notification.update({ emailState: 'pending', emailedAt: null }, { where: { id: ids } });
}

/** One mail per notification, to people on "immediate". */
async function sendImmediate(ids: number[]): Promise<void> {
  const claimed = await claim(ids);
  if (!claimed.length) return;
  const rows = await Notification.findAll({ where: { id: claimed }, order: [['id', 'ASC']] });
  const users = new Map((await User.findAll({ where: { id: [...new Set(rows.map((r) => r.recipientId))] } })).map((u) => [u.id, u]));
  for (const n of rows) {
    const u = users.get(n.recipientId);
    if (!u) continue;
    const ok = await ctx().mailer.send({
      to: u.email,
      subject: n.subject,
      text:
        `Hello ${u.name},\n\n${n.subject}\n\n${n.text ? `${quote(n.text)}\n\n` : ''}` +
        `Open it in Cayline: ${absolute(n.link)}\n\n` +
        `You receive these mails one by one. Choose a daily digest or no mail at ${absolute('/account')}.\n`,
    });
    if (!ok) await giveBack([n.id]);
  }
}

export interface DigestResult {
  /** Digest mails sent. */
  mails: number;
  /** Notifications they listed. */
  notifications: number;
}

/**
 * The daily digest: one mail per person on "digest" listing every notification
 * not mailed yet (oldest first), which are then marked sent. Also sends, the
 * same way, what people on "immediate" still have pending after a failed send
 * or a change of preference. Run by the scheduled job (server/jobs/digest.job.ts);
 * call it directly to run it now.
 */
export async function runDigest(now = new Date()): Promise<DigestResult> {
  const { sequelize } = ctx();
  const who = await sequelize.query<{ id: number }>(
    `SELECT DISTINCT u.id FROM notifications n JOIN users u ON u.id = n.recipient_id
      WHERE n.email_state = 'pending' AND u.active
        AND (u.notify_mode = 'digest' OR (u.notify_mode = 'immediate' AND n.created_at < :before))
      ORDER BY u.id`,
    { replacements: { before: new Date(now.getTime() - IMMEDIATE_GRACE_MS) }, type: QueryTypes.SELECT },
  );
  const result: DigestResult = { mails: 0, notifications: 0 };
  for (const { id } of who) {
    try {
      const listed = await sequelize.transaction(async (transaction) => {
        const user = await User.findByPk(id, { transaction });
        if (!user) return 0;
        const rows = await sequelize.query<{ id: string; subject: string; text: string; link: string; created_at: Date }>(
          `SELECT id, subject, text, link, created_at FROM notifications
            WHERE recipient_id = :id AND email_state = 'pending' ORDER BY id FOR UPDATE SKIP LOCKED`,
          { replacements: { id }, type: QueryTypes.SELECT, transaction },
        );
        if (!rows.length) return 0;
        await claim(rows.map((r) => Number(r.id)), transaction);
        const lines = rows.map((r) => {
          const excerpt = oneLine(r.text, 160);
          return `- ${r.subject} (${new Date(r.created_at).toISOString().slice(0, 16).replace('T', ' ')} UTC)\n${excerpt ? `  ${excerpt}\n` : ''}  ${absolute(r.link)}`;
        });
        const ok = await ctx().mailer.send({
          to: user.email,
          subject: `Cayline digest: ${rows.length} notification${rows.length === 1 ? '' : 's'}`,
          text:
            `Hello ${user.name},\n\nHere is what happened in your Cayline projects since your last digest:\n\n${lines.join('\n\n')}\n\n` +
            `Change how you hear from Cayline at ${absolute('/account')}.\n`,
        });
        if (!ok) throw new Error('the digest mail was refused'); // rolls the claim back
        return rows.length;
      });
      if (listed) {
        result.mails++;
        result.notifications += listed;
      }
    } catch (err) {
      logger.warn({ err, userId: id }, 'digest mail failed; its notifications stay pending');
    }
  }
  return result;
}
