/**
 * Review of buildup interpretations: a review state per buildup (Draft, Out
 * for review, Needs rework, Signed off), who signed which version off, every
 * saved version of the geometry (any version can be rebuilt exactly), and the
 * history of review transitions with who, when and an optional comment.
 */
import { DataTypes } from 'sequelize';
import type { MigrationContext } from './context';

export async function up({ queryInterface: q }: MigrationContext) {
  await q.addColumn('buildups', 'review_state', { type: DataTypes.STRING(20), allowNull: false, defaultValue: 'draft' });
  await q.addColumn('buildups', 'signed_off_version', { type: DataTypes.INTEGER, allowNull: true });
  await q.addColumn('buildups', 'signed_off_by_id', { type: DataTypes.INTEGER, allowNull: true, references: { model: 'users', key: 'id' }, onDelete: 'SET NULL' });
  await q.addColumn('buildups', 'signed_off_at', { type: DataTypes.DATE, allowNull: true });
  await q.createTable('buildup_versions', {
    buildup_id: { type: DataTypes.INTEGER, allowNull: false, primaryKey: true, references: { model: 'buildups', key: 'id' }, onDelete: 'CASCADE' },
    version: { type: DataTypes.INTEGER, allowNull: false, primaryKey: true },
    name: { type: DataTypes.STRING(120), allowNull: false },
    geometry: { type: DataTypes.JSONB, allowNull: false },
    /** The section's velocity model when this version was saved (null: the default model). */
    velocity: { type: DataTypes.JSONB, allowNull: true },
    /** The section's calibration (section_calibrations.version) when this version was saved; null: not yet tied. */
    calibration_version: { type: DataTypes.INTEGER, allowNull: true },
    /** The section's vertical domain when this version was saved ('twt_ms' | 'depth_m'). */
    vertical_domain: { type: DataTypes.STRING(10), allowNull: false },
    /** Why the version was kept when not by a save (e.g. at sign-off, for a changed velocity model or Ties). */
    note: { type: DataTypes.STRING(300), allowNull: true },
    saved_by_id: { type: DataTypes.INTEGER, allowNull: true, references: { model: 'users', key: 'id' }, onDelete: 'SET NULL' },
    saved_at: { type: DataTypes.DATE, allowNull: false },
  });
  await q.createTable('review_transitions', {
    id: { type: DataTypes.INTEGER, autoIncrement: true, primaryKey: true },
    buildup_id: { type: DataTypes.INTEGER, allowNull: false, references: { model: 'buildups', key: 'id' }, onDelete: 'CASCADE' },
    from_state: { type: DataTypes.STRING(20), allowNull: false },
    to_state: { type: DataTypes.STRING(20), allowNull: false },
    buildup_version: { type: DataTypes.INTEGER, allowNull: false },
    actor_id: { type: DataTypes.INTEGER, allowNull: true, references: { model: 'users', key: 'id' }, onDelete: 'SET NULL' },
    comment: { type: DataTypes.TEXT, allowNull: true },
    created_at: { type: DataTypes.DATE, allowNull: false },
  });
  await q.addIndex('review_transitions', ['buildup_id', 'id']);
  // buildups saved before versions were kept: their current state becomes their first kept version
  await q.sequelize.query(`
    INSERT INTO buildup_versions (buildup_id, version, name, geometry, velocity, calibration_version, vertical_domain, saved_by_id, saved_at)
    SELECT b.id, b.version, b.name, b.geometry, v.model,
           (SELECT max(c.version) FROM section_calibrations c WHERE c.section_id = b.section_id),
           s.vertical_domain, b.updated_by_id, b.updated_at
      FROM buildups b JOIN sections s ON s.id = b.section_id LEFT JOIN section_velocities v ON v.section_id = b.section_id`);
}

export async function down({ queryInterface: q }: MigrationContext) {
  await q.dropTable('review_transitions');
  await q.dropTable('buildup_versions');
  for (const c of ['signed_off_at', 'signed_off_by_id', 'signed_off_version', 'review_state']) await q.removeColumn('buildups', c);
}
