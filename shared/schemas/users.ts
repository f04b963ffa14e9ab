import { z } from 'zod';
import { NAME_MAX } from './limits';
import { roleSchema } from './auth';
import { safeText } from './text';

export const PASSWORD_MIN = 10;

export const createUserSchema = z.object({
  email: z.string().trim().toLowerCase().email('must be an e-mail address'),
  name: safeText().trim().min(1, 'is required').max(NAME_MAX),
  role: roleSchema,
  /** Optional: when absent, the person is invited by mail with a single-use link to choose their own password. */
  password: safeText().min(PASSWORD_MIN, `must be at least ${PASSWORD_MIN} characters`).max(200).optional(),
});
export type CreateUserInput = z.infer<typeof createUserSchema>;

export const updateUserSchema = z
  .object({
    name: safeText().trim().min(1, 'is required').max(NAME_MAX).optional(),
    role: roleSchema.optional(),
    active: z.boolean().optional(),
  })
  .refine((v) => Object.keys(v).length > 0, { message: 'nothing to change' });
export type UpdateUserInput = z.infer<typeof updateUserSchema>;

/** GET /api/users/directory?email= — an exact address (not a search). */
export const directoryQuerySchema = z.object({
  email: z.string().trim().toLowerCase().email('must be a complete e-mail address').optional(),
});
export type DirectoryQuery = z.infer<typeof directoryQuerySchema>;

/** An active user as listed for pickers. */
export interface DirectoryEntry {
  id: number;
  name: string;
  email: string;
  role: z.infer<typeof roleSchema>;
}
