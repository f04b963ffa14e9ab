/**
 * Notifications: one entry point for everything that tells people about
 * something (mentions, replies in a thread they took part in, review state
 * changes). Callers compute the recipients and call `notify` inside the
 * transaction that makes the change, so the notification rows commit or roll
 * back with it; e-mail is sent after the commit (immediate) or by the digest
 * job, according to each recipient's preference.
 *
 * INTERFACE FIXED; implementation pending (notifications table, bell, mail).
 */
import type { Transaction } from 'sequelize';

export type NotifyKind = 'mention' | 'reply' | 'review_state';

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

export async function notify(_event: NotifyEvent, _transaction: Transaction): Promise<void> {
  // implemented by the notifications work (see the interface above)
}
