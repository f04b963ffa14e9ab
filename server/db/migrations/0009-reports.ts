/**
 * Buildup reports (PDF, crop PNG and SVG) made by the `buildup-report` job.
 * One row per cache key: the key names everything the report shows (buildup
 * version and review state, section version, calibration, velocity model,
 * project version, unit, stretch, paper), so any change asks under a new key
 * and the old row is removed with its files. `worker_id` / `progress_at`
 * follow the pyramid builds (0005): a report whose owner died is queued again.
 * Files live under `reports/<cache_key>/` in the file store, written into
 * scratch first and moved into place in one rename.
 */
import { DataTypes } from 'sequelize';
import type { MigrationContext } from './context';

export async function up({ queryInterface: q }: MigrationContext) {
  await q.createTable('buildup_reports', {
    id: { type: DataTypes.INTEGER, autoIncrement: true, primaryKey: true },
    buildup_id: { type: DataTypes.INTEGER, allowNull: false, references: { model: 'buildups', key: 'id' }, onDelete: 'CASCADE' },
    cache_key: { type: DataTypes.STRING(64), allowNull: false, unique: true },
    paper: { type: DataTypes.STRING(10), allowNull: false },
    unit: { type: DataTypes.STRING(4), allowNull: false },
    stretch: { type: DataTypes.DOUBLE, allowNull: false },
    /** 'queued' | 'running' | 'ready' | 'failed' */
    status: { type: DataTypes.STRING(10), allowNull: false },
    progress: { type: DataTypes.INTEGER, allowNull: false, defaultValue: 0 },
    failure_reason: { type: DataTypes.TEXT, allowNull: true },
    job_id: { type: DataTypes.STRING(64), allowNull: true },
    worker_id: { type: DataTypes.STRING(32), allowNull: true },
    progress_at: { type: DataTypes.DATE, allowNull: true },
    attempts: { type: DataTypes.INTEGER, allowNull: false, defaultValue: 0 },
    pdf_bytes: { type: DataTypes.INTEGER, allowNull: true },
    pages: { type: DataTypes.INTEGER, allowNull: true },
    requested_by_id: { type: DataTypes.INTEGER, allowNull: true, references: { model: 'users', key: 'id' }, onDelete: 'SET NULL' },
    created_at: { type: DataTypes.DATE, allowNull: false },
    updated_at: { type: DataTypes.DATE, allowNull: false },
  });
  await q.addIndex('buildup_reports', ['buildup_id']);
  await q.addIndex('buildup_reports', ['status']);
}

export async function down({ queryInterface: q }: MigrationContext) {
  await q.dropTable('buildup_reports');
}
