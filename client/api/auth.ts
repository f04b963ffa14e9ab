import type { LoginInput, LoginResult, PublicUser } from '../../shared/schemas/auth';
import { apiFetch } from './http';

/** POST /api/auth/login — 401 `invalid_credentials`, 429 when rate limited. */
export function login(input: LoginInput): Promise<LoginResult> {
  return apiFetch<LoginResult>('/auth/login', { method: 'POST', body: input });
}

/** GET /api/auth/me */
export async function fetchMe(): Promise<PublicUser> {
  const res = await apiFetch<{ user: PublicUser }>('/auth/me');
  return res.user;
}

/** POST /api/auth/logout — the token stops working. Never triggers the sign-out redirect. */
export function logout(): Promise<void> {
  return apiFetch<void>('/auth/logout', { method: 'POST', authRedirect: false });
}
