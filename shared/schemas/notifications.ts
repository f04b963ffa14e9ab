/** Notifications (the bell), each person's e-mail preference, and the admin Outbox. */
import { z } from 'zod';

export const NOTIFY_MODES = ['immediate', 'digest', 'none'] as const;
export const notifyModeSchema = z.enum(NOTIFY_MODES);
export type NotifyMode = z.infer<typeof notifyModeSchema>;

/** What a notification is about. */
export const NOTIFY_KINDS = ['mention', 'reply', 'review_state'] as const;
export type NotifyKind = (typeof NOTIFY_KINDS)[number];

export const preferencesSchema = z.object({ notifyMode: notifyModeSchema });
export type PreferencesInput = z.infer<typeof preferencesSchema>;

export const notificationListQuerySchema = z.object({
  page: z.coerce.number().int().min(1).default(1),
  pageSize: z.coerce.number().int().min(1).max(100).default(20),
  /** "true": only unread ones. */
  unread: z.enum(['true', 'false']).optional(),
});
export type NotificationListQuery = z.infer<typeof notificationListQuerySchema>;

/** Mark some (`ids`) or all (`all: true`) of one's notifications read. */
export const markReadSchema = z
  .object({
    ids: z.array(z.number().int().positive()).min(1, 'name at least one notification').max(500).optional(),
    all: z.literal(true).optional(),
  })
  .strict()
  .refine((v) => (v.ids === undefined) !== (v.all === undefined), { path: ['ids'], message: 'give either ids or all: true' });
export type MarkReadInput = z.infer<typeof markReadSchema>;

export interface NotificationItem {
  id: number;
  kind: 'mention' | 'reply' | 'review_state';
  projectId: number;
  actor: { id: number; name: string } | null;
  subject: string;
  text: string;
  link: string;
  readAt: string | null;
  createdAt: string;
}

export interface NotificationPage {
  items: NotificationItem[];
  total: number;
  page: number;
  pageSize: number;
  /** Unread notifications of the asker, whatever the page. */
  unread: number;
}

export const outboxQuerySchema = z.object({
  page: z.coerce.number().int().min(1).default(1),
  pageSize: z.coerce.number().int().min(1).max(100).default(20),
});

export interface OutboxSummary {
  id: number;
  sender: string;
  recipients: string[];
  subject: string;
  receivedAt: string;
  /** The first line or so of the text. */
  excerpt: string;
}

export interface OutboxMessage extends OutboxSummary {
  messageId: string | null;
  text: string;
  links: string[];
}

export interface OutboxPage {
  items: OutboxSummary[];
  total: number;
  page: number;
  pageSize: number;
}
