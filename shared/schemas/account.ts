/** One's own account: set a password from a mailed link, forgot password, change password. */
import { z } from 'zod';
import { safeText } from './text';
import { PASSWORD_MIN } from './users';

export const newPasswordSchema = safeText().min(PASSWORD_MIN, `must be at least ${PASSWORD_MIN} characters`).max(200);

/** The link's token: 32 random bytes in base64url (43 characters). */
export const accountTokenSchema = z.string().regex(/^[A-Za-z0-9_-]{20,100}$/, 'is not a valid link token');

export const setPasswordSchema = z.object({ token: accountTokenSchema, password: newPasswordSchema });
export type SetPasswordInput = z.infer<typeof setPasswordSchema>;

export const forgotPasswordSchema = z.object({ email: z.string().trim().toLowerCase().email('must be an e-mail address').max(254) });
export type ForgotPasswordInput = z.infer<typeof forgotPasswordSchema>;

export const changePasswordSchema = z
  .object({ currentPassword: safeText().min(1, 'is required').max(200), newPassword: newPasswordSchema })
  .refine((v) => v.currentPassword !== v.newPassword, { path: ['newPassword'], message: 'must differ from the current password' });
export type ChangePasswordInput = z.infer<typeof changePasswordSchema>;

/** The one answer to "forgot password", whether the address has an account or not. */
export const FORGOT_PASSWORD_ANSWER = 'If an active account uses this address, a link to choose a new password is on its way. It works once and expires.';
