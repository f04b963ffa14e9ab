/** The bell: one's own notifications, newest first, with the unread count; marking them read. */
import { Op, type WhereOptions } from 'sequelize';
import { Notification } from '../models/notification';
import { User } from '../models/index';
import { ctx } from '../context';
import type { MarkReadInput, NotificationItem, NotificationListQuery, NotificationPage } from '../../shared/schemas/notifications';

export async function unreadCount(userId: number): Promise<number> {
  return Notification.count({ where: { recipientId: userId, readAt: null } });
}

export async function listNotifications(userId: number, q: NotificationListQuery): Promise<NotificationPage> {
  const where: WhereOptions<Notification> = q.unread === 'true' ? { recipientId: userId, readAt: null } : { recipientId: userId };
  const { rows, count } = await Notification.findAndCountAll({ where, order: [['id', 'DESC']], limit: q.pageSize, offset: (q.page - 1) * q.pageSize });
  const actorIds = [...new Set(rows.map((r) => r.actorId).filter((id): id is number => id !== null))];
  const actors = new Map((actorIds.length ? await User.findAll({ where: { id: actorIds }, attributes: ['id', 'name'] }) : []).map((u) => [u.id, u]));
  const items: NotificationItem[] = rows.map((n) => {
    const a = n.actorId !== null ? actors.get(n.actorId) : undefined;
    return {
      id: n.id,
      kind: n.kind,
      projectId: n.projectId,
      actor: a ? { id: a.id, name: a.name } : null,
      subject: n.subject,
      text: n.text,
      link: n.link,
      readAt: n.readAt ? n.readAt.toISOString() : null,
      createdAt: n.createdAt.toISOString(),
    };
  });
  return { items, total: count, page: q.page, pageSize: q.pageSize, unread: await unreadCount(userId) };
}

/** Mark the given (own) notifications, or all, read; ids that are not the asker's are ignored. Returns the new unread count. */
export async function markRead(userId: number, input: MarkReadInput): Promise<{ marked: number; unread: number }> {
  const where: WhereOptions<Notification> =
    input.all ? { recipientId: userId, readAt: null } : { recipientId: userId, readAt: null, id: { [Op.in]: input.ids ?? [] } };
  const [marked] = await ctx().sequelize.transaction(async (transaction) => Notification.update({ readAt: new Date() }, { where, transaction }));
  return { marked, unread: await unreadCount(userId) };
}
