/** BuildupReport: a report job and its cached files (migration 0009). Bound from initModels. */
import { DataTypes, Model, type CreationOptional, type InferAttributes, type InferCreationAttributes, type Sequelize } from 'sequelize';

export type ReportStatus = 'queued' | 'running' | 'ready' | 'failed';

export class BuildupReportRow extends Model<InferAttributes<BuildupReportRow>, InferCreationAttributes<BuildupReportRow>> {
  declare id: CreationOptional<number>;
  declare buildupId: number;
  /** sha256 (hex) of everything the report shows; also its folder under `reports/` in the file store. */
  declare cacheKey: string;
  declare paper: string;
  declare unit: string;
  declare stretch: number;
  declare status: ReportStatus;
  declare progress: CreationOptional<number>;
  declare failureReason: CreationOptional<string | null>;
  declare jobId: CreationOptional<string | null>;
  declare workerId: CreationOptional<string | null>;
  declare progressAt: CreationOptional<Date | null>;
  declare attempts: CreationOptional<number>;
  declare pdfBytes: CreationOptional<number | null>;
  declare pages: CreationOptional<number | null>;
  declare requestedById: number | null;
  declare createdAt: CreationOptional<Date>;
  declare updatedAt: CreationOptional<Date>;
}

export function initReportModels(sequelize: Sequelize) {
  BuildupReportRow.init(
    {
      id: { type: DataTypes.INTEGER, autoIncrement: true, primaryKey: true },
      buildupId: { type: DataTypes.INTEGER, allowNull: false },
      cacheKey: { type: DataTypes.STRING(64), allowNull: false, unique: true },
      paper: { type: DataTypes.STRING(10), allowNull: false },
      unit: { type: DataTypes.STRING(4), allowNull: false },
      stretch: { type: DataTypes.DOUBLE, allowNull: false },
      status: { type: DataTypes.STRING(10), allowNull: false },
      progress: { type: DataTypes.INTEGER, allowNull: false, defaultValue: 0 },
      failureReason: { type: DataTypes.TEXT, allowNull: true },
      jobId: { type: DataTypes.STRING(64), allowNull: true },
      workerId: { type: DataTypes.STRING(32), allowNull: true },
      progressAt: { type: DataTypes.DATE, allowNull: true },
      attempts: { type: DataTypes.INTEGER, allowNull: false, defaultValue: 0 },
      pdfBytes: { type: DataTypes.INTEGER, allowNull: true },
      pages: { type: DataTypes.INTEGER, allowNull: true },
      requestedById: { type: DataTypes.INTEGER, allowNull: true },
      createdAt: DataTypes.DATE,
      updatedAt: DataTypes.DATE,
    },
    { sequelize, tableName: 'buildup_reports' },
  );
}
