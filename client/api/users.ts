import type { PublicUser, Role } from '../../shared/schemas/auth';
import type { Page } from '../../shared/schemas/projects';
import type { CreateUserInput, UpdateUserInput } from '../../shared/schemas/users';
import { apiFetch } from './http';

export interface ListParams {
  q?: string;
  page?: number;
  pageSize?: number;
}

/** An active user as listed for pickers (GET /api/users/directory). */
export interface DirectoryUser {
  id: number;
  name: string;
  email: string;
  role: Role;
}

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

/** GET /api/users/directory (any signed-in user) */
export function fetchDirectory(): Promise<DirectoryUser[]> {
  return apiFetch<DirectoryUser[]>('/users/directory');
}
