/**
 * The process-wide handles services need: configuration, database, mailer,
 * file store, job queue. Filled once by `createApp` (server/app.ts).
 */
import type { Sequelize } from 'sequelize';
import type { Config } from './config';
import type { Mailer } from './mail/mailer';
import type { SessionCache } from './services/session-cache';

export interface AppContext {
  config: Config;
  sequelize: Sequelize;
  mailer: Mailer;
  /** Sessions checked a moment ago (kept in step by a LISTEN connection); absent: every request asks PostgreSQL. */
  sessions?: SessionCache;
}

let current: AppContext | null = null;

export function setContext(c: AppContext) {
  current = c;
}

export function ctx(): AppContext {
  if (!current) throw new Error('App context used before createApp()');
  return current;
}
