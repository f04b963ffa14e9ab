/** Sections (uploaded seismic images, their tile pyramid state) and their versioned axis calibrations. */
import { DataTypes } from 'sequelize';
import type { MigrationContext } from './context';

const stamps = {
  created_at: { type: DataTypes.DATE, allowNull: false, defaultValue: DataTypes.NOW },
  updated_at: { type: DataTypes.DATE, allowNull: false, defaultValue: DataTypes.NOW },
};

export async function up({ queryInterface: q }: MigrationContext) {
  await q.createTable('sections', {
    id: { type: DataTypes.INTEGER, autoIncrement: true, primaryKey: true },
    project_id: { type: DataTypes.INTEGER, allowNull: false, references: { model: 'projects', key: 'id' }, onDelete: 'CASCADE' },
    title: { type: DataTypes.STRING(160), allowNull: false },
    line_name: { type: DataTypes.STRING(80), allowNull: false, defaultValue: '' },
    survey: { type: DataTypes.STRING(80), allowNull: false, defaultValue: '' },
    vertical_domain: { type: DataTypes.STRING(10), allowNull: false },
    notes: { type: DataTypes.TEXT, allowNull: false, defaultValue: '' },
    polarity_note: { type: DataTypes.STRING(500), allowNull: false, defaultValue: '' },
    start_lon: { type: DataTypes.DOUBLE, allowNull: true },
    start_lat: { type: DataTypes.DOUBLE, allowNull: true },
    end_lon: { type: DataTypes.DOUBLE, allowNull: true },
    end_lat: { type: DataTypes.DOUBLE, allowNull: true },
    status: { type: DataTypes.STRING(12), allowNull: false, defaultValue: 'processing' },
    failure_reason: { type: DataTypes.TEXT, allowNull: true },
    progress: { type: DataTypes.INTEGER, allowNull: false, defaultValue: 0 },
    width: { type: DataTypes.INTEGER, allowNull: false },
    height: { type: DataTypes.INTEGER, allowNull: false },
    source_format: { type: DataTypes.STRING(8), allowNull: false },
    source_bytes: { type: DataTypes.BIGINT, allowNull: false },
    storage_key: { type: DataTypes.STRING(64), allowNull: false, unique: true },
    job_id: { type: DataTypes.STRING(64), allowNull: true },
    attempts: { type: DataTypes.INTEGER, allowNull: false, defaultValue: 0 },
    pyramid: { type: DataTypes.JSONB, allowNull: true },
    uploaded_by_id: { type: DataTypes.INTEGER, allowNull: true, references: { model: 'users', key: 'id' }, onDelete: 'SET NULL' },
    version: { type: DataTypes.INTEGER, allowNull: false, defaultValue: 0 },
    ...stamps,
  });
  await q.sequelize.query(`ALTER TABLE sections ADD CONSTRAINT sections_status_check CHECK (status IN ('processing','ready','failed'))`);
  await q.sequelize.query(`ALTER TABLE sections ADD CONSTRAINT sections_domain_check CHECK (vertical_domain IN ('twt_ms','depth_m'))`);
  await q.sequelize.query(`ALTER TABLE sections ADD CONSTRAINT sections_progress_check CHECK (progress BETWEEN 0 AND 100)`);
  await q.sequelize.query(
    `ALTER TABLE sections ADD CONSTRAINT sections_coords_check CHECK (num_nulls(start_lon, start_lat, end_lon, end_lat) IN (0, 4))`,
  );
  await q.addIndex('sections', ['project_id', 'created_at']);
  await q.addIndex('sections', ['status']);

  await q.createTable('section_calibrations', {
    id: { type: DataTypes.INTEGER, autoIncrement: true, primaryKey: true },
    section_id: { type: DataTypes.INTEGER, allowNull: false, references: { model: 'sections', key: 'id' }, onDelete: 'CASCADE' },
    version: { type: DataTypes.INTEGER, allowNull: false },
    ties: { type: DataTypes.JSONB, allowNull: false },
    fit: { type: DataTypes.JSONB, allowNull: false },
    created_by: { type: DataTypes.INTEGER, allowNull: true, references: { model: 'users', key: 'id' }, onDelete: 'SET NULL' },
    created_at: { type: DataTypes.DATE, allowNull: false, defaultValue: DataTypes.NOW },
  });
  await q.addIndex('section_calibrations', ['section_id', 'version'], { unique: true });
}

export async function down({ queryInterface: q }: MigrationContext) {
  await q.dropTable('section_calibrations');
  await q.dropTable('sections');
}
