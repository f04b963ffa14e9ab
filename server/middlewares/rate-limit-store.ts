/**
 * An express-rate-limit store in PostgreSQL (table `rate_limit_hits`,
 * migration 0015): the hit counters of the per-address limiters live in the
 * database every web process shares, so several processes behind a load
 * balancer allow together what one process allows (the memory store counts
 * per process). One row per `<prefix><address>`, its window restarting at the
 * first hit after `reset_at`; one upsert per request.
 */
import { QueryTypes } from 'sequelize';
import type { Options, Store, ClientRateLimitInfo } from 'express-rate-limit';
import { ctx } from '../context';

/** Rows whose window ended longer ago than this are pruned now and then. */
const PRUNE_AFTER_MS = 60 * 60_000;

export class PgRateLimitStore implements Store {
  windowMs = 60_000;
  /** Keys are shared by every process using the same database. */
  localKeys = false;

  constructor(readonly prefix: string) {}

  init(options: Options) {
    this.windowMs = options.windowMs;
  }

  private key(k: string) {
    return `${this.prefix}${k}`.slice(0, 300);
  }

  async increment(key: string): Promise<ClientRateLimitInfo> {
    const { sequelize } = ctx();
    const [row] = await sequelize.query<{ hits: number; reset_at: Date }>(
      `INSERT INTO rate_limit_hits (key, hits, reset_at) VALUES (:key, 1, now() + make_interval(secs => :secs))
       ON CONFLICT (key) DO UPDATE SET
         hits = CASE WHEN rate_limit_hits.reset_at <= now() THEN 1 ELSE rate_limit_hits.hits + 1 END,
         reset_at = CASE WHEN rate_limit_hits.reset_at <= now() THEN excluded.reset_at ELSE rate_limit_hits.reset_at END
       RETURNING hits, reset_at`,
      { replacements: { key: this.key(key), secs: this.windowMs / 1000 }, type: QueryTypes.SELECT },
    );
    if (Math.random() < 0.01) {
      await sequelize.query(`DELETE FROM rate_limit_hits WHERE reset_at < now() - make_interval(secs => :secs)`, { replacements: { secs: PRUNE_AFTER_MS / 1000 } });
    }
    return { totalHits: Number(row.hits), resetTime: new Date(row.reset_at) };
  }

  async decrement(key: string) {
    await ctx().sequelize.query(`UPDATE rate_limit_hits SET hits = greatest(hits - 1, 0) WHERE key = :key`, { replacements: { key: this.key(key) } });
  }

  async resetKey(key: string) {
    await ctx().sequelize.query(`DELETE FROM rate_limit_hits WHERE key = :key`, { replacements: { key: this.key(key) } });
  }
}
