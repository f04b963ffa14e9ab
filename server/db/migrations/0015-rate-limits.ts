/**
 * Request-rate counters shared by every web process (sign-in, "forgot
 * password" and account links per client address; server/middlewares/rate-limit-store.ts),
 * so that N processes behind a load balancer allow the same number of
 * attempts as one. One row per limiter and address, reset when its window ends.
 */
import { DataTypes } from 'sequelize';
import type { MigrationContext } from './context';

export async function up({ queryInterface: q }: MigrationContext) {
  await q.createTable('rate_limit_hits', {
    key: { type: DataTypes.STRING(300), primaryKey: true },
    hits: { type: DataTypes.INTEGER, allowNull: false, defaultValue: 0 },
    reset_at: { type: DataTypes.DATE, allowNull: false },
  });
  await q.addIndex('rate_limit_hits', ['reset_at']);
}

export async function down({ queryInterface: q }: MigrationContext) {
  await q.dropTable('rate_limit_hits');
}
