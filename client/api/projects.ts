import type {
  CreateProjectInput,
  Page,
  ProjectDetail,
  ProjectMemberView,
  ProjectSummary,
  UpdateProjectInput,
} from '../../shared/schemas/projects';
import { apiFetch } from './http';
import type { ListParams } from './users';

/** GET /api/projects — the caller's projects (admins see all). */
export function listProjects(params: ListParams = {}): Promise<Page<ProjectSummary>> {
  return apiFetch<Page<ProjectSummary>>('/projects', { query: { ...params } });
}

/** POST /api/projects (admin, interpreter) — the creator becomes a member. */
export function createProject(input: CreateProjectInput): Promise<ProjectDetail> {
  return apiFetch<ProjectDetail>('/projects', { method: 'POST', body: input });
}

/** GET /api/projects/:id */
export function getProject(id: number): Promise<ProjectDetail> {
  return apiFetch<ProjectDetail>(`/projects/${id}`);
}

/** PATCH /api/projects/:id (admin, or interpreter member) */
export function updateProject(id: number, input: UpdateProjectInput): Promise<ProjectDetail> {
  return apiFetch<ProjectDetail>(`/projects/${id}`, { method: 'PATCH', body: input });
}

/** DELETE /api/projects/:id (admin, or the owner) */
export function deleteProject(id: number): Promise<void> {
  return apiFetch<void>(`/projects/${id}`, { method: 'DELETE' });
}

/** GET /api/projects/:id/members */
export function listMembers(projectId: number): Promise<ProjectMemberView[]> {
  return apiFetch<ProjectMemberView[]>(`/projects/${projectId}/members`);
}

/** POST /api/projects/:id/members — answers the new member list. */
export function addMember(projectId: number, userId: number): Promise<ProjectMemberView[]> {
  return apiFetch<ProjectMemberView[]>(`/projects/${projectId}/members`, { method: 'POST', body: { userId } });
}

/** DELETE /api/projects/:id/members/:userId — 409 `owner_required` for the owner (hand ownership over first). */
export function removeMember(projectId: number, userId: number): Promise<void> {
  return apiFetch<void>(`/projects/${projectId}/members/${userId}`, { method: 'DELETE' });
}

/** PUT /api/projects/:id/owner (the owner or an admin) — the new owner must be an interpreter or admin member. */
export function transferOwner(projectId: number, userId: number): Promise<ProjectDetail> {
  return apiFetch<ProjectDetail>(`/projects/${projectId}/owner`, { method: 'PUT', body: { userId } });
}
