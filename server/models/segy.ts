/**
 * SegyUpload: one uploaded SEG-Y file. Its amplitudes (float32, trace-major)
 * and raw 240-byte trace headers live under `segy/<storageKey>/` in the file
 * store; sections made from it point here (`sections.segy_upload_id`).
 */
import {
  DataTypes,
  Model,
  type CreationOptional,
  type InferAttributes,
  type InferCreationAttributes,
  type Sequelize,
} from 'sequelize';
import type { SegyHeaderSummary, SegyRanges, SegyUploadOptions, SegyWarning } from '../../shared/schemas/segy';

export class SegyUpload extends Model<InferAttributes<SegyUpload>, InferCreationAttributes<SegyUpload>> {
  declare id: CreationOptional<number>;
  declare projectId: number;
  declare fileName: string;
  declare bytes: number;
  /** Random folder name under `segy/` in the file store; never from the client. */
  declare storageKey: string;
  declare status: CreationOptional<'ready'>;
  declare dimension: '2d' | '3d';
  declare traceCount: number;
  declare samplesPerTrace: number;
  declare header: SegyHeaderSummary;
  declare ranges: SegyRanges;
  declare overrides: SegyUploadOptions;
  declare warnings: SegyWarning[];
  declare uploadedById: number | null;
  declare createdAt: CreationOptional<Date>;
}

export function initSegyModels(sequelize: Sequelize) {
  SegyUpload.init(
    {
      id: { type: DataTypes.INTEGER, autoIncrement: true, primaryKey: true },
      projectId: { type: DataTypes.INTEGER, allowNull: false },
      fileName: { type: DataTypes.STRING(255), allowNull: false, defaultValue: '' },
      bytes: {
        type: DataTypes.BIGINT,
        allowNull: false,
        get(this: SegyUpload) {
          return Number(this.getDataValue('bytes'));
        },
      },
      storageKey: { type: DataTypes.STRING(64), allowNull: false, unique: true },
      status: { type: DataTypes.STRING(12), allowNull: false, defaultValue: 'ready' },
      dimension: { type: DataTypes.STRING(2), allowNull: false },
      traceCount: { type: DataTypes.INTEGER, allowNull: false },
      samplesPerTrace: { type: DataTypes.INTEGER, allowNull: false },
      header: { type: DataTypes.JSONB, allowNull: false },
      ranges: { type: DataTypes.JSONB, allowNull: false },
      overrides: { type: DataTypes.JSONB, allowNull: false, defaultValue: {} },
      warnings: { type: DataTypes.JSONB, allowNull: false, defaultValue: [] },
      uploadedById: { type: DataTypes.INTEGER, allowNull: true },
      createdAt: DataTypes.DATE,
    },
    { sequelize, tableName: 'segy_uploads', updatedAt: false },
  );
}
