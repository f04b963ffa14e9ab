/**
 * Depth pyramids (issue #13, depth view): one row per TWT section whose depth
 * view was asked for. The `section-depth` job resamples every image column
 * from TWT to depth (shared/depth-view) and builds a tile pyramid of the
 * result under `sections/<key>/depth-<build>/` in the file store.
 *
 * - `build` counts the builds asked for (the next folder's number);
 *   `ready_build` is the build whose files are in the store now (kept while a
 *   newer one is made, so the view keeps showing the last good one);
 * - `calibration_version` / `velocity_at` are the section's calibration
 *   version and velocity-model time the queued build was asked with; the
 *   `ready_*` columns say what the stored one was built from (`ready_basis`:
 *   the exact engine depth context, so the browser maps with the very same
 *   conversion; `ready_axis`: z0, dz, width, height; `ready_pyramid`);
 * - `worker_id` / `progress_at` / `attempts` follow the section pyramids (0005):
 *   a build whose owner died is queued again by the same sweep.
 */
import { DataTypes } from 'sequelize';
import type { MigrationContext } from './context';

export async function up({ queryInterface: q }: MigrationContext) {
  await q.createTable('section_depth_pyramids', {
    section_id: { type: DataTypes.INTEGER, primaryKey: true, references: { model: 'sections', key: 'id' }, onDelete: 'CASCADE' },
    /** 'queued' | 'running' | 'ready' | 'failed' */
    status: { type: DataTypes.STRING(10), allowNull: false },
    progress: { type: DataTypes.INTEGER, allowNull: false, defaultValue: 0 },
    build: { type: DataTypes.INTEGER, allowNull: false, defaultValue: 0 },
    calibration_version: { type: DataTypes.INTEGER, allowNull: true },
    velocity_at: { type: DataTypes.DATE, allowNull: true },
    failure_reason: { type: DataTypes.TEXT, allowNull: true },
    job_id: { type: DataTypes.STRING(64), allowNull: true },
    worker_id: { type: DataTypes.STRING(32), allowNull: true },
    progress_at: { type: DataTypes.DATE, allowNull: true },
    attempts: { type: DataTypes.INTEGER, allowNull: false, defaultValue: 0 },
    ready_build: { type: DataTypes.INTEGER, allowNull: true },
    ready_calibration_version: { type: DataTypes.INTEGER, allowNull: true },
    ready_velocity_at: { type: DataTypes.DATE, allowNull: true },
    ready_basis: { type: DataTypes.JSONB, allowNull: true },
    ready_axis: { type: DataTypes.JSONB, allowNull: true },
    ready_pyramid: { type: DataTypes.JSONB, allowNull: true },
    created_at: { type: DataTypes.DATE, allowNull: false },
    updated_at: { type: DataTypes.DATE, allowNull: false },
  });
  await q.addIndex('section_depth_pyramids', ['status']);
  await q.sequelize.query(
    `ALTER TABLE section_depth_pyramids ADD CONSTRAINT section_depth_pyramids_status_check CHECK (status IN ('queued', 'running', 'ready', 'failed'))`,
  );
}

export async function down({ queryInterface: q }: MigrationContext) {
  await q.dropTable('section_depth_pyramids');
}
