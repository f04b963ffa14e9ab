import type { ChangePasswordInput, ForgotPasswordInput, SetPasswordInput } from '../../shared/schemas/account';
import type { MarkReadInput, NotificationPage, NotifyMode, OutboxMessage, OutboxPage } from '../../shared/schemas/notifications';
import { apiFetch } from './http';

/** GET /api/notifications — one's own, newest first, with the unread count. */
export function listNotifications(params: { page?: number; pageSize?: number; unread?: boolean } = {}): Promise<NotificationPage> {
  return apiFetch<NotificationPage>('/notifications', { query: { page: params.page, pageSize: params.pageSize, unread: params.unread ? 'true' : undefined } });
}

/** POST /api/notifications/read — `{ ids }` or `{ all: true }`. */
export function markNotificationsRead(input: MarkReadInput): Promise<{ marked: number; unread: number }> {
  return apiFetch('/notifications/read', { method: 'POST', body: input });
}

/** GET /api/account/preferences */
export function fetchPreferences(): Promise<{ notifyMode: NotifyMode }> {
  return apiFetch('/account/preferences');
}

/** PUT /api/account/preferences */
export function savePreferences(notifyMode: NotifyMode): Promise<{ notifyMode: NotifyMode }> {
  return apiFetch('/account/preferences', { method: 'PUT', body: { notifyMode } });
}

/** POST /api/account/password — 400 `wrong_password` naming currentPassword; other sessions end. */
export function changePassword(input: ChangePasswordInput): Promise<void> {
  return apiFetch<void>('/account/password', { method: 'POST', body: input });
}

/** POST /api/auth/forgot-password — the same 202 answer whether the address has an account or not. */
export function requestPasswordReset(input: ForgotPasswordInput): Promise<{ message: string }> {
  return apiFetch('/auth/forgot-password', { method: 'POST', body: input, authRedirect: false });
}

/** POST /api/auth/set-password — 400 `link_invalid`, 410 `link_used` / `link_expired`. */
export function setPasswordFromLink(input: SetPasswordInput): Promise<{ email: string }> {
  return apiFetch('/auth/set-password', { method: 'POST', body: input, authRedirect: false });
}

/** GET /api/admin/mail (admin) — the Outbox, newest first. */
export function listOutbox(params: { page?: number; pageSize?: number } = {}): Promise<OutboxPage> {
  return apiFetch<OutboxPage>('/admin/mail', { query: { ...params } });
}

/** GET /api/admin/mail/:id (admin) */
export function readOutboxMessage(id: number): Promise<OutboxMessage> {
  return apiFetch<OutboxMessage>(`/admin/mail/${id}`);
}
