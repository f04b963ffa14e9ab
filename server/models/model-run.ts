/** ModelRun: a saved run of the growth forward model (migration 0013). Bound from initModels. */
import { DataTypes, Model, type CreationOptional, type InferAttributes, type InferCreationAttributes, type NonAttribute, type Sequelize } from 'sequelize';
import type { User } from './core';
import type { ModelRunSummary, ProfileSource } from '../../shared/schemas/model-runs';

export class ModelRun extends Model<InferAttributes<ModelRun>, InferCreationAttributes<ModelRun>> {
  declare id: CreationOptional<number>;
  declare buildupId: number;
  declare name: string;
  declare params: unknown;
  declare profileSource: ProfileSource;
  declare depthOffsetM: number;
  declare summary: ModelRunSummary;
  declare createdById: number | null;
  declare createdAt: CreationOptional<Date>;
  declare createdBy?: NonAttribute<User | null>;
}

export function initModelRunModels(sequelize: Sequelize) {
  ModelRun.init(
    {
      id: { type: DataTypes.INTEGER, autoIncrement: true, primaryKey: true },
      buildupId: { type: DataTypes.INTEGER, allowNull: false },
      name: { type: DataTypes.STRING(200), allowNull: false },
      params: { type: DataTypes.JSONB, allowNull: false },
      profileSource: { type: DataTypes.STRING(10), allowNull: false },
      depthOffsetM: { type: DataTypes.DOUBLE, allowNull: false, defaultValue: 0 },
      summary: { type: DataTypes.JSONB, allowNull: false },
      createdById: { type: DataTypes.INTEGER, allowNull: true },
      createdAt: DataTypes.DATE,
    },
    { sequelize, tableName: 'model_runs', updatedAt: false },
  );
}
