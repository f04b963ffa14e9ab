/**
 * Who is building what: every process that starts the job queue registers in
 * `job_workers` and refreshes `heartbeat_at` every few seconds; a section's
 * running build records its owner (`sections.worker_id`) and the time of its
 * last progress report (`sections.progress_at`). A build whose owner has no
 * fresh heartbeat (or, on the same host, whose pid is gone) is resumed at once
 * instead of waiting for the job's expiry. No foreign key: a missing worker
 * row means a dead owner.
 */
import { DataTypes } from 'sequelize';
import type { MigrationContext } from './context';

export async function up({ queryInterface: q }: MigrationContext) {
  await q.createTable('job_workers', {
    id: { type: DataTypes.STRING(32), primaryKey: true },
    host: { type: DataTypes.STRING(255), allowNull: false },
    pid: { type: DataTypes.INTEGER, allowNull: false },
    runs_workers: { type: DataTypes.BOOLEAN, allowNull: false },
    started_at: { type: DataTypes.DATE, allowNull: false },
    heartbeat_at: { type: DataTypes.DATE, allowNull: false },
  });
  await q.addIndex('job_workers', ['heartbeat_at']);
  await q.addColumn('sections', 'worker_id', { type: DataTypes.STRING(32), allowNull: true });
  await q.addColumn('sections', 'progress_at', { type: DataTypes.DATE, allowNull: true });
}

export async function down({ queryInterface: q }: MigrationContext) {
  await q.removeColumn('sections', 'progress_at');
  await q.removeColumn('sections', 'worker_id');
  await q.dropTable('job_workers');
}
