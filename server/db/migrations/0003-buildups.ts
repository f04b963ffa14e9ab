/** Buildups traced on a section (geometry in image pixels) and each section's velocity model. */
import { DataTypes } from 'sequelize';
import type { MigrationContext } from './context';

export async function up({ queryInterface: q }: MigrationContext) {
  await q.createTable('buildups', {
    id: { type: DataTypes.INTEGER, autoIncrement: true, primaryKey: true },
    section_id: { type: DataTypes.INTEGER, allowNull: false, references: { model: 'sections', key: 'id' }, onDelete: 'CASCADE' },
    name: { type: DataTypes.STRING(120), allowNull: false },
    geometry: { type: DataTypes.JSONB, allowNull: false },
    version: { type: DataTypes.INTEGER, allowNull: false, defaultValue: 0 },
    created_by_id: { type: DataTypes.INTEGER, allowNull: true, references: { model: 'users', key: 'id' }, onDelete: 'SET NULL' },
    updated_by_id: { type: DataTypes.INTEGER, allowNull: true, references: { model: 'users', key: 'id' }, onDelete: 'SET NULL' },
    created_at: { type: DataTypes.DATE, allowNull: false, defaultValue: DataTypes.NOW },
    updated_at: { type: DataTypes.DATE, allowNull: false, defaultValue: DataTypes.NOW },
  });
  await q.addIndex('buildups', ['section_id']);
  await q.createTable('section_velocities', {
    section_id: { type: DataTypes.INTEGER, primaryKey: true, references: { model: 'sections', key: 'id' }, onDelete: 'CASCADE' },
    model: { type: DataTypes.JSONB, allowNull: false },
    updated_by_id: { type: DataTypes.INTEGER, allowNull: true, references: { model: 'users', key: 'id' }, onDelete: 'SET NULL' },
    updated_at: { type: DataTypes.DATE, allowNull: false, defaultValue: DataTypes.NOW },
  });
}

export async function down({ queryInterface: q }: MigrationContext) {
  await q.dropTable('section_velocities');
  await q.dropTable('buildups');
}
