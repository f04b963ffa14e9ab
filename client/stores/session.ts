import { defineStore } from 'pinia';
import { computed, ref } from 'vue';
import type { PublicUser, Role } from '../../shared/schemas/auth';
import { fetchMe, login, logout } from '../api/auth';
import { queryClient } from '../api/queryClient';

const STORAGE_KEY = 'cayline.session';

interface StoredSession {
  token: string;
  expiresAt: string | null;
  user: PublicUser;
}

function readStored(): StoredSession | null {
  try {
    const raw = localStorage.getItem(STORAGE_KEY);
    if (!raw) return null;
    const parsed = JSON.parse(raw) as Partial<StoredSession>;
    if (typeof parsed.token !== 'string' || !parsed.user || typeof parsed.user.id !== 'number') return null;
    return { token: parsed.token, expiresAt: parsed.expiresAt ?? null, user: parsed.user };
  } catch {
    return null;
  }
}

function isExpired(expiresAt: string | null): boolean {
  if (!expiresAt) return false;
  const t = Date.parse(expiresAt);
  return Number.isFinite(t) && t <= Date.now();
}

/** Who is signed in; token and user are kept in localStorage. */
export const useSessionStore = defineStore('session', () => {
  const stored = readStored();
  const valid = stored && !isExpired(stored.expiresAt) ? stored : null;
  if (stored && !valid) localStorage.removeItem(STORAGE_KEY);

  const token = ref<string | null>(valid?.token ?? null);
  const expiresAt = ref<string | null>(valid?.expiresAt ?? null);
  const user = ref<PublicUser | null>(valid?.user ?? null);

  const isSignedIn = computed(() => token.value !== null && user.value !== null && !isExpired(expiresAt.value));

  function persist(): void {
    if (token.value && user.value) {
      const s: StoredSession = { token: token.value, expiresAt: expiresAt.value, user: user.value };
      localStorage.setItem(STORAGE_KEY, JSON.stringify(s));
    } else {
      localStorage.removeItem(STORAGE_KEY);
    }
  }

  /** True when the signed-in user has one of the given global roles. */
  function hasRole(...roles: Role[]): boolean {
    return user.value !== null && roles.includes(user.value.role);
  }

  /** Sign in; throws ApiError (401 `invalid_credentials`, 429, 400 validation). */
  async function signIn(email: string, password: string): Promise<PublicUser> {
    const result = await login({ email, password });
    queryClient.clear();
    token.value = result.token;
    expiresAt.value = result.expiresAt ?? null;
    user.value = result.user;
    persist();
    return result.user;
  }

  /** Forget the session locally (no server call). */
  function clear(): void {
    token.value = null;
    expiresAt.value = null;
    user.value = null;
    persist();
    queryClient.clear();
  }

  /** Log out on the server (best effort) and forget the session. */
  async function signOut(): Promise<void> {
    if (token.value) {
      try {
        await logout();
      } catch {
        // The token may already be invalid; signing out locally is what matters.
      }
    }
    clear();
  }

  /** Refresh the stored user from GET /api/auth/me (role or name may have changed). */
  async function refreshUser(): Promise<void> {
    if (!token.value) return;
    const me = await fetchMe();
    user.value = me;
    persist();
  }

  return { token, expiresAt, user, isSignedIn, hasRole, signIn, signOut, clear, refreshUser };
});
