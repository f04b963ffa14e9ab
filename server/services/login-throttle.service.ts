/**
 * Per-account sign-in delay, kept in PostgreSQL (table `login_throttles`) so
 * every server process sees the same count.
 *
 * Each attempt is counted *before* the password is checked, in one atomic
 * upsert that also refuses it while the account is held: parallel attempts
 * cannot slip past the limit. After `freeAttempts` counted attempts without a
 * success the account is held for `baseDelayMs`, doubling with each further
 * attempt up to `maxDelayMs`. A success forgets the count; so does a pause of
 * `windowMs` without attempts. Rows are keyed by an HMAC of the e-mail
 * address, whether or not an account exists, so the answers for an unknown
 * address are the same as for a known one and no address is stored in clear.
 */
import crypto from 'node:crypto';
import { QueryTypes } from 'sequelize';
import { AppError } from '../errors';
import { ctx } from '../context';

export class LoginThrottledError extends AppError {
  constructor(public retryAfterSeconds: number) {
    super(429, 'rate_limited', 'Too many sign-in attempts for this account; wait a little and try again');
  }
}

/** The row key for an e-mail address (lower-cased), an HMAC under the server's signing secret. */
export function throttleKey(secret: string, email: string): string {
  return crypto.createHmac('sha256', secret).update(`login-throttle:${email.trim().toLowerCase()}`).digest('hex');
}

/** Count one sign-in attempt for `email`, or throw LoginThrottledError while the account is held. */
export async function countAttempt(email: string): Promise<void> {
  const { sequelize, config } = ctx();
  const { freeAttempts, baseDelayMs, maxDelayMs, windowMs } = config.loginAccountLimit;
  const key = throttleKey(config.jwtSecret, email);
  const stale = `t.last_attempt_at < now() - :windowMs * interval '1 millisecond'`;
  const next = `(CASE WHEN ${stale} THEN 1 ELSE t.failed_count + 1 END)`;
  const lockFor = (n: string) =>
    `CASE WHEN ${n} >= :free THEN now() + LEAST(:base * power(2, LEAST(${n} - :free, 40)), :max) * interval '1 millisecond' END`;
  const replacements = { key, free: freeAttempts, base: baseDelayMs, max: maxDelayMs, windowMs };

  // Forget counts nobody has touched for a window (index on last_attempt_at; usually no rows).
  await sequelize.query(`DELETE FROM login_throttles t WHERE ${stale} AND (t.locked_until IS NULL OR t.locked_until <= now())`, {
    replacements,
    type: QueryTypes.DELETE,
  });
  const counted = await sequelize.query(
    `INSERT INTO login_throttles AS t (key, failed_count, last_attempt_at, locked_until)
     VALUES (:key, 1, now(), ${lockFor('1')})
     ON CONFLICT (key) DO UPDATE SET
       failed_count = ${next},
       last_attempt_at = now(),
       locked_until = ${lockFor(next)}
     WHERE t.locked_until IS NULL OR t.locked_until <= now() OR ${stale}
     RETURNING t.failed_count`,
    { replacements, type: QueryTypes.SELECT },
  );
  if (counted.length) return;
  const [held] = await sequelize.query<{ seconds: number }>(
    `SELECT GREATEST(1, ceil(extract(epoch FROM locked_until - now())))::int AS seconds FROM login_throttles WHERE key = :key`,
    { replacements, type: QueryTypes.SELECT },
  );
  throw new LoginThrottledError(held?.seconds ?? 1);
}

/** A successful sign-in forgets the count. */
export async function forgetAttempts(email: string): Promise<void> {
  const { sequelize, config } = ctx();
  await sequelize.query(`DELETE FROM login_throttles WHERE key = :key`, {
    replacements: { key: throttleKey(config.jwtSecret, email) },
    type: QueryTypes.DELETE,
  });
}
