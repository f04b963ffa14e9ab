/**
 * Units and the project register:
 * - `users.length_unit`: each person's display unit for lengths ('m' or 'ft';
 *   the engine keeps working in metres, conversion happens at display/export);
 * - `buildup_summaries`: the measured figures of each buildup's current
 *   version (written whenever that measurement is computed, and by the
 *   `buildup-summary` job for buildups with none or a stale one), so the
 *   register sorts, filters and pages in SQL instead of measuring every
 *   buildup on every request. A summary is current when its buildup version,
 *   calibration row and velocity-model time equal the buildup's and section's.
 */
import { DataTypes } from 'sequelize';
import type { MigrationContext } from './context';

export async function up({ queryInterface: q }: MigrationContext) {
  await q.addColumn('users', 'length_unit', { type: DataTypes.STRING(4), allowNull: false, defaultValue: 'm' });
  await q.sequelize.query(`ALTER TABLE users ADD CONSTRAINT users_length_unit_check CHECK (length_unit IN ('m', 'ft'))`);
  await q.createTable('buildup_summaries', {
    buildup_id: { type: DataTypes.INTEGER, primaryKey: true, references: { model: 'buildups', key: 'id' }, onDelete: 'CASCADE' },
    buildup_version: { type: DataTypes.INTEGER, allowNull: false },
    /** id of the section_calibrations row measured with (null: none). */
    calibration_id: { type: DataTypes.INTEGER, allowNull: true },
    /** section_velocities.updated_at measured with (null: the default model). */
    velocity_at: { type: DataTypes.DATE, allowNull: true },
    vertical_domain: { type: DataTypes.STRING(10), allowNull: false },
    /** 'ok' | 'not_measurable' | 'not_calibrated' | 'failed' */
    status: { type: DataTypes.STRING(20), allowNull: false },
    problem: { type: DataTypes.TEXT, allowNull: true },
    classification: { type: DataTypes.STRING(40), allowNull: true },
    height_m: { type: DataTypes.DOUBLE, allowNull: true },
    base_width_m: { type: DataTypes.DOUBLE, allowNull: true },
    aspect_ratio: { type: DataTypes.DOUBLE, allowNull: true },
    trajectory_deg: { type: DataTypes.DOUBLE, allowNull: true },
    area_m2: { type: DataTypes.DOUBLE, allowNull: true },
    volume_m3: { type: DataTypes.DOUBLE, allowNull: true },
    volume_p50_m3: { type: DataTypes.DOUBLE, allowNull: true },
    crest_x_m: { type: DataTypes.DOUBLE, allowNull: true },
    crest_z_m: { type: DataTypes.DOUBLE, allowNull: true },
    /** Where the crest sits along the section, 0 at its left edge and 1 at its right (for line geography). */
    crest_fraction: { type: DataTypes.DOUBLE, allowNull: true },
    computed_at: { type: DataTypes.DATE, allowNull: false },
  });
  await q.addIndex('buildup_summaries', ['classification']);
  await q.addIndex('buildup_summaries', ['height_m']);
}

export async function down({ queryInterface: q }: MigrationContext) {
  await q.dropTable('buildup_summaries');
  await q.sequelize.query('ALTER TABLE users DROP CONSTRAINT IF EXISTS users_length_unit_check');
  await q.removeColumn('users', 'length_unit');
}
