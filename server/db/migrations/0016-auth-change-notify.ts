/**
 * Every change to a session or an account tells the web processes at once:
 * a statement-level trigger on `auth_sessions` and `users` sends
 * `NOTIFY cayline_auth_changed` (delivered when the change commits, whoever
 * made it: a web process, a worker, an operator's SQL). Each web process
 * listens and forgets the sessions it had checked (server/services/session-cache.ts).
 */
import type { MigrationContext } from './context';

export async function up({ sequelize }: MigrationContext) {
  await sequelize.query(`
    CREATE FUNCTION cayline_auth_changed() RETURNS trigger LANGUAGE plpgsql AS $$
    BEGIN
      PERFORM pg_notify('cayline_auth_changed', TG_TABLE_NAME);
      RETURN NULL;
    END $$`);
  for (const table of ['auth_sessions', 'users']) {
    await sequelize.query(`CREATE TRIGGER ${table}_auth_changed AFTER UPDATE OR DELETE ON ${table} FOR EACH STATEMENT EXECUTE FUNCTION cayline_auth_changed()`);
    await sequelize.query(`CREATE TRIGGER ${table}_auth_truncated AFTER TRUNCATE ON ${table} FOR EACH STATEMENT EXECUTE FUNCTION cayline_auth_changed()`);
  }
}

export async function down({ sequelize }: MigrationContext) {
  for (const table of ['auth_sessions', 'users']) {
    await sequelize.query(`DROP TRIGGER IF EXISTS ${table}_auth_changed ON ${table}`);
    await sequelize.query(`DROP TRIGGER IF EXISTS ${table}_auth_truncated ON ${table}`);
  }
  await sequelize.query('DROP FUNCTION IF EXISTS cayline_auth_changed()');
}
