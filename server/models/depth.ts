/** SectionDepthPyramid: the depth view's pyramid of a TWT section (migration 0014). Bound from initModels. */
import { DataTypes, Model, type CreationOptional, type InferAttributes, type InferCreationAttributes, type Sequelize } from 'sequelize';
import type { DepthAxis, DepthViewBasis } from '../../shared/depth-view/index';
import type { PyramidInfo } from './section';

export type DepthStatus = 'queued' | 'running' | 'ready' | 'failed';

export class SectionDepthPyramid extends Model<InferAttributes<SectionDepthPyramid>, InferCreationAttributes<SectionDepthPyramid>> {
  declare sectionId: number;
  declare status: DepthStatus;
  declare progress: CreationOptional<number>;
  /** Number of the build asked for last (its files go to `sections/<key>/depth-<build>`). */
  declare build: CreationOptional<number>;
  declare calibrationVersion: CreationOptional<number | null>;
  declare velocityAt: CreationOptional<Date | null>;
  declare failureReason: CreationOptional<string | null>;
  declare jobId: CreationOptional<string | null>;
  declare workerId: CreationOptional<string | null>;
  declare progressAt: CreationOptional<Date | null>;
  declare attempts: CreationOptional<number>;
  /** The build whose files are in the store (null until the first one is ready). */
  declare readyBuild: CreationOptional<number | null>;
  declare readyCalibrationVersion: CreationOptional<number | null>;
  declare readyVelocityAt: CreationOptional<Date | null>;
  declare readyBasis: CreationOptional<DepthViewBasis | null>;
  declare readyAxis: CreationOptional<DepthAxis | null>;
  declare readyPyramid: CreationOptional<PyramidInfo | null>;
  declare createdAt: CreationOptional<Date>;
  declare updatedAt: CreationOptional<Date>;
}

export function initDepthModels(sequelize: Sequelize) {
  SectionDepthPyramid.init(
    {
      sectionId: { type: DataTypes.INTEGER, primaryKey: true },
      status: { type: DataTypes.STRING(10), allowNull: false },
      progress: { type: DataTypes.INTEGER, allowNull: false, defaultValue: 0 },
      build: { type: DataTypes.INTEGER, allowNull: false, defaultValue: 0 },
      calibrationVersion: { type: DataTypes.INTEGER, allowNull: true },
      velocityAt: { type: DataTypes.DATE, allowNull: true },
      failureReason: { type: DataTypes.TEXT, allowNull: true },
      jobId: { type: DataTypes.STRING(64), allowNull: true },
      workerId: { type: DataTypes.STRING(32), allowNull: true },
      progressAt: { type: DataTypes.DATE, allowNull: true },
      attempts: { type: DataTypes.INTEGER, allowNull: false, defaultValue: 0 },
      readyBuild: { type: DataTypes.INTEGER, allowNull: true },
      readyCalibrationVersion: { type: DataTypes.INTEGER, allowNull: true },
      readyVelocityAt: { type: DataTypes.DATE, allowNull: true },
      readyBasis: { type: DataTypes.JSONB, allowNull: true },
      readyAxis: { type: DataTypes.JSONB, allowNull: true },
      readyPyramid: { type: DataTypes.JSONB, allowNull: true },
      createdAt: DataTypes.DATE,
      updatedAt: DataTypes.DATE,
    },
    { sequelize, tableName: 'section_depth_pyramids' },
  );
}
