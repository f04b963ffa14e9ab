import { z } from 'zod';
import { NAME_MAX } from './limits';
import type { PublicUser } from './auth';
import { safeText } from './text';

export const createProjectSchema = z.object({
  name: safeText().trim().min(1, 'is required').max(NAME_MAX),
  description: safeText({ multiline: true }).trim().max(2000).optional().default(''),
});
export type CreateProjectInput = z.input<typeof createProjectSchema>;

export const updateProjectSchema = z
  .object({
    name: safeText().trim().min(1, 'is required').max(NAME_MAX).optional(),
    description: safeText({ multiline: true }).trim().max(2000).optional(),
  })
  .refine((v) => Object.keys(v).length > 0, { message: 'nothing to change' });
export type UpdateProjectInput = z.infer<typeof updateProjectSchema>;

export const addMemberSchema = z.object({
  userId: z.number().int().positive(),
});
export type AddMemberInput = z.infer<typeof addMemberSchema>;

/** PUT /api/projects/:id/owner — hand ownership to another member. */
export const transferOwnerSchema = z.object({
  userId: z.number().int().positive(),
});
export type TransferOwnerInput = z.infer<typeof transferOwnerSchema>;

/** A member's place in one project: exactly one owner (who alone, with admins, may delete it or hand it over). */
export type ProjectRole = 'owner' | 'member';

export interface ProjectMemberView extends PublicUser {
  projectRole: ProjectRole;
}

export const listQuerySchema = z.object({
  q: safeText().trim().max(200).optional(),
  page: z.coerce.number().int().min(1).default(1),
  pageSize: z.coerce.number().int().min(1).max(200).default(20),
});

export interface ProjectSummary {
  id: number;
  name: string;
  description: string;
  createdAt: string;
  updatedAt: string;
  createdBy: { id: number; name: string } | null;
  /** The member who owns the project (null only for old projects nobody eligible was left in). */
  owner: { id: number; name: string } | null;
  memberCount: number;
}

export interface ProjectDetail extends ProjectSummary {
  members: ProjectMemberView[];
  canEdit: boolean;
}

export interface Page<T> {
  items: T[];
  total: number;
  page: number;
  pageSize: number;
}
