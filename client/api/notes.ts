/** Note pins and threads (shared/schemas/notes.ts). */
import type { CreateThreadInput, MessageInput, NoteMessageView, NoteThreadView } from '../../shared/schemas/notes';
import { apiFetch } from './http';

/** GET /api/sections/:id/threads — every thread of the section with its messages (any project member). */
export function listThreads(sectionId: number, signal?: AbortSignal): Promise<NoteThreadView[]> {
  return apiFetch<NoteThreadView[]>(`/sections/${sectionId}/threads`, { signal });
}

/** POST /api/sections/:id/threads — a Note pin and its first message; 422 names `anchor.at`, `body` or `mentions[i]`. */
export function createThread(sectionId: number, input: CreateThreadInput): Promise<NoteThreadView> {
  return apiFetch<NoteThreadView>(`/sections/${sectionId}/threads`, { method: 'POST', body: input });
}

/** GET /api/threads/:id */
export function getThread(id: number, signal?: AbortSignal): Promise<NoteThreadView> {
  return apiFetch<NoteThreadView>(`/threads/${id}`, { signal });
}

/** PATCH /api/threads/:id — resolve or reopen (any member). */
export function setThreadResolved(id: number, resolved: boolean): Promise<NoteThreadView> {
  return apiFetch<NoteThreadView>(`/threads/${id}`, { method: 'PATCH', body: { resolved } });
}

/** POST /api/threads/:id/messages — a reply. */
export function replyToThread(threadId: number, input: MessageInput): Promise<NoteMessageView> {
  return apiFetch<NoteMessageView>(`/threads/${threadId}/messages`, { method: 'POST', body: input });
}

/** PATCH /api/messages/:id — edit one's own message (marked edited). */
export function editMessage(id: number, input: MessageInput): Promise<NoteMessageView> {
  return apiFetch<NoteMessageView>(`/messages/${id}`, { method: 'PATCH', body: input });
}

/** DELETE /api/messages/:id — delete one's own message (a tombstone stays in the thread). */
export function deleteMessage(id: number): Promise<NoteMessageView> {
  return apiFetch<NoteMessageView>(`/messages/${id}`, { method: 'DELETE' });
}
