import { z } from 'zod';
import { safeText } from './text';

/** Global roles. Project membership is separate (see projects.ts). */
export const ROLES = ['admin', 'interpreter', 'curator', 'reviewer'] as const;
export const roleSchema = z.enum(ROLES);
export type Role = z.infer<typeof roleSchema>;

export const loginSchema = z.object({
  email: z.string().trim().toLowerCase().email('must be an e-mail address'),
  password: safeText().min(1, 'is required').max(200),
});
export type LoginInput = z.infer<typeof loginSchema>;

export interface PublicUser {
  id: number;
  email: string;
  name: string;
  role: Role;
  active: boolean;
  createdAt?: string;
}

export interface LoginResult {
  token: string;
  expiresAt: string;
  user: PublicUser;
}
