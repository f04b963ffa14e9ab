/**
 * Section and SectionCalibration models. `initSectionModels` is called from
 * `initModels` (models/index.ts) after the foundation models are bound.
 */
import {
  DataTypes,
  Model,
  type CreationOptional,
  type InferAttributes,
  type InferCreationAttributes,
  type NonAttribute,
  type Sequelize,
} from 'sequelize';
import type { User } from './core';
import type { SectionStatus, Tie, VerticalDomain } from '../../shared/schemas/sections';
import type { RenderSettings, SegySelection } from '../../shared/schemas/segy';
import { initSegyModels } from './segy';

/** What the pyramid builder produced (stored in `sections.pyramid`). */
export interface PyramidInfo {
  tileSize: number;
  overlap: number;
  format: 'jpeg';
  maxLevel: number;
  preview: { width: number; height: number };
  thumbnail: { width: number; height: number };
}

export type SourceFormat = 'png' | 'jpeg' | 'tiff' | 'segy';

export class Section extends Model<InferAttributes<Section>, InferCreationAttributes<Section>> {
  declare id: CreationOptional<number>;
  declare projectId: number;
  declare title: string;
  declare lineName: CreationOptional<string>;
  declare survey: CreationOptional<string>;
  declare verticalDomain: VerticalDomain;
  declare notes: CreationOptional<string>;
  declare polarityNote: CreationOptional<string>;
  declare startLon: CreationOptional<number | null>;
  declare startLat: CreationOptional<number | null>;
  declare endLon: CreationOptional<number | null>;
  declare endLat: CreationOptional<number | null>;
  declare status: CreationOptional<SectionStatus>;
  declare failureReason: CreationOptional<string | null>;
  declare progress: CreationOptional<number>;
  declare width: number;
  declare height: number;
  declare sourceFormat: SourceFormat;
  declare sourceBytes: number;
  /** Random folder name under `sections/` in the file store; never from the client. */
  declare storageKey: string;
  declare jobId: CreationOptional<string | null>;
  declare attempts: CreationOptional<number>;
  /** The job_workers id of the process running the build now (null while queued or after it ended). */
  declare workerId: CreationOptional<string | null>;
  /** When the running build last reported progress (or the section was queued). */
  declare progressAt: CreationOptional<Date | null>;
  declare pyramid: CreationOptional<PyramidInfo | null>;
  declare uploadedById: number | null;
  /** 'segy' sections are rendered from a SEG-Y upload's amplitudes instead of an image. */
  declare sourceKind: CreationOptional<'image' | 'segy'>;
  declare segyUploadId: CreationOptional<number | null>;
  declare segySelection: CreationOptional<SegySelection | null>;
  declare renderSettings: CreationOptional<RenderSettings | null>;
  declare version: CreationOptional<number>;
  declare createdAt: CreationOptional<Date>;
  declare updatedAt: CreationOptional<Date>;
  declare uploadedBy?: NonAttribute<User | null>;
}

export class SectionCalibration extends Model<InferAttributes<SectionCalibration>, InferCreationAttributes<SectionCalibration>> {
  declare id: CreationOptional<number>;
  declare sectionId: number;
  declare version: number;
  declare ties: Tie[];
  declare fit: unknown;
  declare createdBy: number | null;
  /** 'segy_headers': made from a SEG-Y file's own headers, with zero Ties. */
  declare source: CreationOptional<'ties' | 'segy_headers'>;
  declare createdAt: CreationOptional<Date>;
  declare author?: NonAttribute<User | null>;
}

export function initSectionModels(sequelize: Sequelize) {
  initSegyModels(sequelize);
  Section.init(
    {
      id: { type: DataTypes.INTEGER, autoIncrement: true, primaryKey: true },
      projectId: { type: DataTypes.INTEGER, allowNull: false },
      title: { type: DataTypes.STRING(160), allowNull: false },
      lineName: { type: DataTypes.STRING(80), allowNull: false, defaultValue: '' },
      survey: { type: DataTypes.STRING(80), allowNull: false, defaultValue: '' },
      verticalDomain: { type: DataTypes.STRING(10), allowNull: false },
      notes: { type: DataTypes.TEXT, allowNull: false, defaultValue: '' },
      polarityNote: { type: DataTypes.STRING(500), allowNull: false, defaultValue: '' },
      startLon: { type: DataTypes.DOUBLE, allowNull: true },
      startLat: { type: DataTypes.DOUBLE, allowNull: true },
      endLon: { type: DataTypes.DOUBLE, allowNull: true },
      endLat: { type: DataTypes.DOUBLE, allowNull: true },
      status: { type: DataTypes.STRING(12), allowNull: false, defaultValue: 'processing' },
      failureReason: { type: DataTypes.TEXT, allowNull: true },
      progress: { type: DataTypes.INTEGER, allowNull: false, defaultValue: 0 },
      width: { type: DataTypes.INTEGER, allowNull: false },
      height: { type: DataTypes.INTEGER, allowNull: false },
      sourceFormat: { type: DataTypes.STRING(8), allowNull: false },
      sourceBytes: {
        type: DataTypes.BIGINT,
        allowNull: false,
        get(this: Section) {
          return Number(this.getDataValue('sourceBytes'));
        },
      },
      storageKey: { type: DataTypes.STRING(64), allowNull: false, unique: true },
      jobId: { type: DataTypes.STRING(64), allowNull: true },
      attempts: { type: DataTypes.INTEGER, allowNull: false, defaultValue: 0 },
      workerId: { type: DataTypes.STRING(32), allowNull: true },
      progressAt: { type: DataTypes.DATE, allowNull: true },
      pyramid: { type: DataTypes.JSONB, allowNull: true },
      uploadedById: { type: DataTypes.INTEGER, allowNull: true },
      sourceKind: { type: DataTypes.STRING(8), allowNull: false, defaultValue: 'image' },
      segyUploadId: { type: DataTypes.INTEGER, allowNull: true },
      segySelection: { type: DataTypes.JSONB, allowNull: true },
      renderSettings: { type: DataTypes.JSONB, allowNull: true },
      version: { type: DataTypes.INTEGER, allowNull: false, defaultValue: 0 },
      createdAt: DataTypes.DATE,
      updatedAt: DataTypes.DATE,
    },
    { sequelize, tableName: 'sections', version: true },
  );
  SectionCalibration.init(
    {
      id: { type: DataTypes.INTEGER, autoIncrement: true, primaryKey: true },
      sectionId: { type: DataTypes.INTEGER, allowNull: false },
      version: { type: DataTypes.INTEGER, allowNull: false },
      ties: { type: DataTypes.JSONB, allowNull: false },
      fit: { type: DataTypes.JSONB, allowNull: false },
      createdBy: { type: DataTypes.INTEGER, allowNull: true, field: 'created_by' },
      source: { type: DataTypes.STRING(16), allowNull: false, defaultValue: 'ties' },
      createdAt: DataTypes.DATE,
    },
    { sequelize, tableName: 'section_calibrations', updatedAt: false },
  );
}
