/** Runtime settings, read once from the environment. */
import fs from 'node:fs';
import path from 'node:path';
import crypto from 'node:crypto';
import { fileURLToPath } from 'node:url';

export const ROOT_DIR = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '..');

export interface Config {
  port: number;
  storageDir: string;
  jwtSecret: string;
  jwtExpiresIn: string;
  bcryptCost: number;
  loginRateLimit: { windowMs: number; max: number };
  /**
   * Per-account sign-in delay (state in PostgreSQL, table login_throttles): after
   * `freeAttempts` failures for one e-mail, attempts are refused for
   * `baseDelayMs`, doubling with each further failure up to `maxDelayMs`; the
   * count is forgotten after a success or `windowMs` without attempts.
   */
  loginAccountLimit: { freeAttempts: number; baseDelayMs: number; maxDelayMs: number; windowMs: number };
  /** Express "trust proxy" (TRUST_PROXY): false trusts no proxy, so X-Forwarded-For is ignored. */
  trustProxy: boolean | number | string;
  /** `maxSegyBytes` (SEGY_MAX_BYTES, default 4 GiB): SEG-Y uploads are streamed through the reader, never held, so they may be larger than images. */
  upload: { maxFileBytes: number; maxInputPixels: number; maxSegyBytes?: number };
  /**
   * JSON body limits in bytes (server/middlewares/body.ts): the /api default
   * (JSON_MAX_BYTES, 1 MB), the routes that take large bodies after sign-in
   * (JSON_LARGE_MAX_BYTES, 20 MB: saving a buildup, POST /api/measure) and
   * sign-in (16 KB).
   */
  body: { jsonMaxBytes: number; largeJsonMaxBytes: number; signInMaxBytes: number };
  mail: { host: string; port: number; from: string };
  /**
   * Single-use account links mailed to people (server/services/account.service.ts):
   * invitation links (INVITE_LINK_HOURS, default 72 h) and password-reset links
   * (RESET_LINK_HOURS, default 2 h); "forgot password" requests per address and
   * window (FORGOT_RATE_MAX per 15 min, default 5).
   */
  accountLinks: { inviteHours: number; resetHours: number; forgotRateLimit: { windowMs: number; max: number } };
  /** When the daily digest of unmailed notifications goes out (pg-boss cron, DIGEST_CRON, server time zone UTC). */
  notify: { digestCron: string };
  publicUrl: string;
  /** Background work (pg-boss, schema `pgboss`): run workers in this process, poll interval, attempts per section. */
  jobs: { runWorkers: boolean; pollingIntervalSeconds: number; maxAttempts: number; expireInSeconds: number };
}

function jwtSecretFrom(storageDir: string): string {
  if (process.env.JWT_SECRET) return process.env.JWT_SECRET;
  const file = path.join(storageDir, 'jwt-secret');
  if (!fs.existsSync(file)) {
    fs.mkdirSync(storageDir, { recursive: true });
    fs.writeFileSync(file, crypto.randomBytes(48).toString('base64url'), { mode: 0o600, flag: 'wx' });
  }
  return fs.readFileSync(file, 'utf8').trim();
}

/**
 * TRUST_PROXY as Express's "trust proxy" accepts it: unset or empty → false
 * (trust nothing), "true"/"false", a hop count ("1"), or a comma-separated list
 * of addresses, subnets and names ("loopback", "10.0.0.0/8, 127.0.0.1").
 */
export function parseTrustProxy(raw: string | undefined): boolean | number | string {
  const v = (raw ?? '').trim();
  if (v === '' || v === 'false') return false;
  if (v === 'true') return true;
  if (/^\d+$/.test(v)) return Number(v);
  if (/^[-+]?\d*\.?\d+$/.test(v)) throw new Error(`TRUST_PROXY: a hop count must be a whole number ≥ 0, got "${v}"`);
  return v;
}

/** A whole number of bytes > 0 from the environment, or the default when unset. */
function positiveBytes(name: string, fallback: number): number {
  const raw = (process.env[name] ?? '').trim();
  if (raw === '') return fallback;
  const n = Number(raw);
  if (!Number.isInteger(n) || n <= 0) throw new Error(`${name}: a whole number of bytes > 0, got "${raw}"`);
  return n;
}

/** A number > 0 from the environment, or the default when unset. */
function positiveNumber(name: string, fallback: number): number {
  const raw = (process.env[name] ?? '').trim();
  if (raw === '') return fallback;
  const n = Number(raw);
  if (!Number.isFinite(n) || n <= 0) throw new Error(`${name}: a number > 0, got "${raw}"`);
  return n;
}

export function loadConfig(overrides: Partial<Config> = {}): Config {
  const storageDir = overrides.storageDir ?? path.resolve(process.env.CAYLINE_STORAGE ?? path.join(ROOT_DIR, 'storage'));
  const port = Number(process.env.PORT ?? 8080);
  return {
    port,
    storageDir,
    jwtSecret: overrides.jwtSecret ?? jwtSecretFrom(storageDir),
    jwtExpiresIn: process.env.JWT_EXPIRES_IN ?? '2h',
    bcryptCost: Number(process.env.BCRYPT_COST ?? 12),
    loginRateLimit: { windowMs: 15 * 60_000, max: Number(process.env.LOGIN_RATE_MAX ?? 20) },
    loginAccountLimit: {
      freeAttempts: Number(process.env.LOGIN_ACCOUNT_FREE_ATTEMPTS ?? 5),
      baseDelayMs: 1000,
      maxDelayMs: 15 * 60_000,
      windowMs: 60 * 60_000,
    },
    trustProxy: parseTrustProxy(process.env.TRUST_PROXY),
    upload: {
      maxFileBytes: Number(process.env.UPLOAD_MAX_BYTES ?? 300 * 1024 * 1024),
      maxInputPixels: Number(process.env.UPLOAD_MAX_PIXELS ?? 400_000_000),
      maxSegyBytes: Number(process.env.SEGY_MAX_BYTES ?? 4 * 1024 * 1024 * 1024),
    },
    body: {
      jsonMaxBytes: positiveBytes('JSON_MAX_BYTES', 1024 * 1024),
      largeJsonMaxBytes: positiveBytes('JSON_LARGE_MAX_BYTES', 20 * 1024 * 1024),
      signInMaxBytes: 16 * 1024,
    },
    mail: {
      host: '127.0.0.1',
      port: Number(process.env.SMTP_PORT ?? 0),
      from: process.env.MAIL_FROM ?? 'Cayline <no-reply@cayline.example>',
    },
    accountLinks: {
      inviteHours: positiveNumber('INVITE_LINK_HOURS', 72),
      resetHours: positiveNumber('RESET_LINK_HOURS', 2),
      forgotRateLimit: { windowMs: 15 * 60_000, max: positiveNumber('FORGOT_RATE_MAX', 5) },
    },
    notify: { digestCron: process.env.DIGEST_CRON ?? '0 7 * * *' },
    publicUrl: process.env.PUBLIC_URL ?? `http://localhost:${port}`,
    jobs: {
      runWorkers: process.env.CAYLINE_JOB_WORKERS !== '0',
      pollingIntervalSeconds: Number(process.env.JOB_POLL_SECONDS ?? 2),
      maxAttempts: Number(process.env.JOB_MAX_ATTEMPTS ?? 3),
      expireInSeconds: Number(process.env.JOB_EXPIRE_SECONDS ?? 3600),
    },
    ...overrides,
  };
}
