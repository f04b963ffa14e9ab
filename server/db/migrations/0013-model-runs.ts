/**
 * Saved runs of the growth forward model, per buildup (shared/schemas/model-runs.ts):
 * name, validated parameters, how the antecedent profile was placed, and the
 * result summary computed in the browser. Removed with their buildup; the
 * creator is kept as null when the account goes.
 */
import { DataTypes } from 'sequelize';
import type { MigrationContext } from './context';

export async function up({ queryInterface: q }: MigrationContext) {
  await q.createTable('model_runs', {
    id: { type: DataTypes.INTEGER, autoIncrement: true, primaryKey: true },
    buildup_id: { type: DataTypes.INTEGER, allowNull: false, references: { model: 'buildups', key: 'id' }, onDelete: 'CASCADE' },
    name: { type: DataTypes.STRING(200), allowNull: false },
    params: { type: DataTypes.JSONB, allowNull: false },
    profile_source: { type: DataTypes.STRING(10), allowNull: false },
    depth_offset_m: { type: DataTypes.DOUBLE, allowNull: false, defaultValue: 0 },
    summary: { type: DataTypes.JSONB, allowNull: false },
    created_by_id: { type: DataTypes.INTEGER, allowNull: true, references: { model: 'users', key: 'id' }, onDelete: 'SET NULL' },
    created_at: { type: DataTypes.DATE, allowNull: false },
  });
  await q.addIndex('model_runs', ['buildup_id', 'created_at']);
}

export async function down({ queryInterface: q }: MigrationContext) {
  await q.dropTable('model_runs');
}
