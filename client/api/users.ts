import type { PublicUser } from '../../shared/schemas/auth';
import type { Page } from '../../shared/schemas/projects';
import type { CreateUserInput, DirectoryEntry, UpdateUserInput } from '../../shared/schemas/users';
import { apiFetch } from './http';

export interface ListParams {
  q?: string;
  page?: number;
  pageSize?: number;
}

/** An active user as listed for pickers (GET /api/users/directory). */
export type DirectoryUser = DirectoryEntry;

/** GET /api/users (admin) */
export function listUsers(params: ListParams = {}): Promise<Page<PublicUser>> {
  return apiFetch<Page<PublicUser>>('/users', { query: { ...params } });
}

/** POST /api/users (admin) — 409 `email_taken`. */
export function createUser(input: CreateUserInput): Promise<PublicUser> {
  return apiFetch<PublicUser>('/users', { method: 'POST', body: input });
}

/** PATCH /api/users/:id (admin) */
export function updateUser(id: number, input: UpdateUserInput): Promise<PublicUser> {
  return apiFetch<PublicUser>(`/users/${id}`, { method: 'PATCH', body: input });
}

/**
 * GET /api/users/directory — active people who share a project with the
 * caller (admins: everyone). With `email`, the one person with exactly that
 * address: admins and interpreters find anyone, others only people they share
 * a project with; [] when nobody matches.
 */
export function fetchDirectory(email?: string): Promise<DirectoryUser[]> {
  return apiFetch<DirectoryUser[]>('/users/directory', { query: { email } });
}
