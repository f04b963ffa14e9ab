/**
 * Tokens this process verified a moment ago, with the session and account
 * they stand for, so that a signed-in request neither checks the signature
 * nor asks PostgreSQL again on every call.
 *
 * Verifying a token (HMAC) and checking its session and account (one
 * statement, auth.service.ts `userForPayload`) were most of a cached library
 * search's cost under load. The answer is kept here, keyed by the exact token
 * text passport-jwt verified, and trusted only while it cannot be stale:
 *
 * - every change to `auth_sessions` or `users` (sign-out, "sign out
 *   everywhere", a password change, a role change, deactivation, an
 *   operator's SQL) fires a trigger that sends `NOTIFY cayline_auth_changed`
 *   when it commits (migration 0016); every web process LISTENs on its own
 *   connection and forgets everything it kept;
 * - nothing is kept or used while that connection is not listening (at
 *   start, after it drops, while it reconnects): every request then goes
 *   through passport-jwt and PostgreSQL as before;
 * - an answer read before a change arrived is not kept (`ticket`);
 * - an entry is used only before the token's own expiry, for
 *   `SESSION_TRUST_MS` at most (a bound should a notification ever be
 *   missed), and at most `MAX_ENTRIES` are kept.
 */
import pg from 'pg';
import { logger } from '../logger';
import type { User } from '../models/index';

export const AUTH_CHANNEL = 'cayline_auth_changed';
/** Longest time a checked session is trusted without asking again (`CAYLINE_SESSION_TRUST_MS`, default 5 s; 0 turns the cache off). */
export const SESSION_TRUST_MS = sessionTrustMs(process.env.CAYLINE_SESSION_TRUST_MS);

export function sessionTrustMs(raw: string | undefined): number {
  if (raw === undefined || raw.trim() === '') return 5000;
  const n = Number(raw);
  if (!Number.isFinite(n) || n < 0) throw new Error(`CAYLINE_SESSION_TRUST_MS: expected milliseconds ≥ 0, got ${JSON.stringify(raw)}`);
  return n;
}
// a kept entry holds the token text and a User instance (a few KB): 5,000 stay well under 50 MB
const MAX_ENTRIES = 5_000;
const RECONNECT_MS = [500, 1000, 2000, 5000, 10_000];

export interface KeptSession {
  user: User;
  sid: string;
  /** The token's expiry (ms since the epoch). */
  expiresAt: number;
}
interface Entry extends KeptSession {
  at: number;
}

export class SessionCache {
  private entries = new Map<string, Entry>();
  private epoch = 0;
  private listening = false;
  hits = 0;
  misses = 0;
  /** Tests lengthen it to show that a change is seen through NOTIFY, not through expiry. */
  constructor(public trustMs = SESSION_TRUST_MS) {}

  /** True while the change listener is connected: only then are answers kept and used. */
  get active(): boolean {
    return this.listening;
  }

  setListening(on: boolean) {
    this.listening = on;
    this.clear();
  }

  /** The session of a token verified less than `trustMs` ago and not yet expired, if any. */
  lookup(token: string, now = Date.now()): KeptSession | undefined {
    if (!this.listening) return undefined;
    const e = this.entries.get(token);
    if (!e || now - e.at >= this.trustMs || now >= e.expiresAt) {
      if (e) this.entries.delete(token);
      this.misses++;
      return undefined;
    }
    this.hits++;
    return e;
  }

  /** Taken before verifying; `remember` keeps the answer only if nothing changed meanwhile. */
  ticket(): number {
    return this.epoch;
  }

  remember(token: string, kept: KeptSession, ticket: number, at = Date.now()) {
    if (!this.listening || ticket !== this.epoch || !(at < kept.expiresAt)) return;
    if (this.entries.size >= MAX_ENTRIES) this.entries.delete(this.entries.keys().next().value!);
    this.entries.set(token, { ...kept, at });
  }

  /** Forget everything (a session or an account changed somewhere). */
  clear() {
    this.entries.clear();
    this.epoch++;
  }

  get size(): number {
    return this.entries.size;
  }
}

export interface SessionWatch {
  cache: SessionCache;
  close(): Promise<void>;
}

/**
 * Listen for session and account changes on a connection of its own and keep
 * `cache` in step; reconnect with back-off when the connection drops. Never
 * throws: while it cannot listen the cache simply stays off.
 */
export function watchSessions(databaseUrl: string, cache = new SessionCache()): SessionWatch {
  let client: pg.Client | null = null;
  let stopped = false;
  let failures = 0;
  let timer: NodeJS.Timeout | null = null;

  const lost = (why: string) => {
    if (cache.active) logger.warn({ why }, 'session change listener lost; checking every session in PostgreSQL until it is back');
    cache.setListening(false);
    const c = client;
    client = null;
    c?.removeAllListeners('notification');
    c?.end().catch(() => {});
    if (!stopped && !timer) {
      timer = setTimeout(connect, RECONNECT_MS[Math.min(failures++, RECONNECT_MS.length - 1)]);
      timer.unref();
    }
  };

  async function connect() {
    timer = null;
    if (stopped) return;
    const c = new pg.Client({ connectionString: databaseUrl, application_name: 'cayline-session-watch', keepAlive: true, connectionTimeoutMillis: 5000 });
    client = c;
    c.on('error', (e) => client === c && lost(e.message));
    c.on('end', () => client === c && lost('connection ended'));
    c.on('notification', (n) => n.channel === AUTH_CHANNEL && cache.clear());
    try {
      await c.connect();
      await c.query(`LISTEN ${AUTH_CHANNEL}`);
      if (stopped || client !== c) {
        await c.end().catch(() => {});
        return;
      }
      failures = 0;
      cache.setListening(true);
    } catch (e) {
      if (client === c) lost((e as Error).message);
    }
  }

  void connect();
  return {
    cache,
    async close() {
      stopped = true;
      if (timer) clearTimeout(timer);
      timer = null;
      cache.setListening(false);
      const c = client;
      client = null;
      await c?.end().catch(() => {});
    },
  };
}

type Hooked = { removeHook(hook: string, name: string): unknown; addHook(hook: string, name: string, fn: (...args: unknown[]) => void): unknown };
const WRITE_HOOKS = ['afterUpdate', 'afterBulkUpdate', 'afterDestroy', 'afterBulkDestroy', 'afterUpsert'] as const;

/**
 * Forget at once when this process changes a session or an account through
 * the models (sign-out, password, role, deactivation), and again when that
 * change's transaction commits: the NOTIFY reaches this process's listener a
 * moment later, and a request arriving in between must not be answered from
 * what was kept before.
 */
export function forgetOnWrites(cache: SessionCache, models: Hooked[]) {
  for (const m of models) {
    for (const hook of WRITE_HOOKS) {
      m.removeHook(hook, 'sessionCache');
      m.addHook(hook, 'sessionCache', (...args: unknown[]) => {
        cache.clear();
        const options = args[args.length - 1] as { transaction?: { afterCommit(fn: () => void): void } } | undefined;
        options?.transaction?.afterCommit(() => cache.clear());
      });
    }
  }
}
