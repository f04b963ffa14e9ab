/**
 * SEG-Y uploads (issue #12): one row per uploaded SEG-Y file whose amplitudes
 * (float32, trace-major) and raw trace headers are kept once under
 * `segy/<storage_key>/`; sections made from it (a 2D line, or an inline /
 * crossline extracted from a 3D cube) point at it and carry their render
 * settings. Calibration versions say where they came from (`ties` or
 * `segy_headers`).
 */
import { DataTypes } from 'sequelize';
import type { MigrationContext } from './context';

export async function up({ queryInterface: q }: MigrationContext) {
  await q.createTable('segy_uploads', {
    id: { type: DataTypes.INTEGER, autoIncrement: true, primaryKey: true },
    project_id: { type: DataTypes.INTEGER, allowNull: false, references: { model: 'projects', key: 'id' }, onDelete: 'CASCADE' },
    file_name: { type: DataTypes.STRING(255), allowNull: false, defaultValue: '' },
    bytes: { type: DataTypes.BIGINT, allowNull: false },
    storage_key: { type: DataTypes.STRING(64), allowNull: false, unique: true },
    status: { type: DataTypes.STRING(12), allowNull: false, defaultValue: 'ready' },
    dimension: { type: DataTypes.STRING(2), allowNull: false },
    trace_count: { type: DataTypes.INTEGER, allowNull: false },
    samples_per_trace: { type: DataTypes.INTEGER, allowNull: false },
    /** Textual header, binary header fields, revision, format, byte order, y axis. */
    header: { type: DataTypes.JSONB, allowNull: false },
    /** inline / crossline / cdp ranges, position source, line ends, length unit. */
    ranges: { type: DataTypes.JSONB, allowNull: false },
    /** Byte positions given in the upload form (cdpX, cdpY, inline, crossline), spacing, EPSG code, domain. */
    overrides: { type: DataTypes.JSONB, allowNull: false, defaultValue: {} },
    warnings: { type: DataTypes.JSONB, allowNull: false, defaultValue: [] },
    uploaded_by_id: { type: DataTypes.INTEGER, allowNull: true, references: { model: 'users', key: 'id' }, onDelete: 'SET NULL' },
    created_at: { type: DataTypes.DATE, allowNull: false, defaultValue: DataTypes.NOW },
  });
  await q.sequelize.query(`ALTER TABLE segy_uploads ADD CONSTRAINT segy_uploads_dimension_check CHECK (dimension IN ('2d','3d'))`);
  await q.sequelize.query(`ALTER TABLE segy_uploads ADD CONSTRAINT segy_uploads_status_check CHECK (status IN ('ready'))`);
  await q.addIndex('segy_uploads', ['project_id', 'created_at']);

  await q.addColumn('sections', 'source_kind', { type: DataTypes.STRING(8), allowNull: false, defaultValue: 'image' });
  await q.addColumn('sections', 'segy_upload_id', { type: DataTypes.INTEGER, allowNull: true, references: { model: 'segy_uploads', key: 'id' }, onDelete: 'RESTRICT' });
  await q.addColumn('sections', 'segy_selection', { type: DataTypes.JSONB, allowNull: true });
  await q.addColumn('sections', 'render_settings', { type: DataTypes.JSONB, allowNull: true });
  await q.sequelize.query(`ALTER TABLE sections ADD CONSTRAINT sections_source_kind_check CHECK (source_kind IN ('image','segy'))`);
  await q.sequelize.query(`ALTER TABLE sections ADD CONSTRAINT sections_segy_link_check CHECK ((source_kind = 'segy') = (segy_upload_id IS NOT NULL))`);
  await q.addIndex('sections', ['segy_upload_id']);

  await q.addColumn('section_calibrations', 'source', { type: DataTypes.STRING(16), allowNull: false, defaultValue: 'ties' });
  await q.sequelize.query(`ALTER TABLE section_calibrations ADD CONSTRAINT section_calibrations_source_check CHECK (source IN ('ties','segy_headers'))`);
}

export async function down({ queryInterface: q }: MigrationContext) {
  await q.removeColumn('section_calibrations', 'source');
  await q.removeColumn('sections', 'render_settings');
  await q.removeColumn('sections', 'segy_selection');
  await q.removeColumn('sections', 'segy_upload_id');
  await q.removeColumn('sections', 'source_kind');
  await q.dropTable('segy_uploads');
}
