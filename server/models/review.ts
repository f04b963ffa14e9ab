/**
 * Review of buildups: every saved version of a buildup (`buildup_versions`,
 * one row per save, with what its measurements depend on) and the history of
 * review transitions (`review_transitions`). Bound from initModels.
 */
import { DataTypes, Model, type CreationOptional, type InferAttributes, type InferCreationAttributes, type NonAttribute, type Sequelize } from 'sequelize';
import type { User } from './core';
import type { BuildupGeometry, VelocityModel } from '../../shared/editor/model';
import type { ReviewState } from '../../shared/schemas/review';

export class BuildupVersion extends Model<InferAttributes<BuildupVersion>, InferCreationAttributes<BuildupVersion>> {
  declare buildupId: number;
  declare version: number;
  declare name: string;
  declare geometry: BuildupGeometry;
  /** The section's velocity model at save time; null: the house default applied. */
  declare velocity: VelocityModel | null;
  /** `section_calibrations.version` at save time; null: the section had no Ties yet. */
  declare calibrationVersion: number | null;
  declare verticalDomain: 'twt_ms' | 'depth_m';
  /** Why the version was kept when not by a save (null for a save). */
  declare note: CreationOptional<string | null>;
  declare savedById: number | null;
  declare savedAt: Date;
  declare savedBy?: NonAttribute<User | null>;
}

export class ReviewTransition extends Model<InferAttributes<ReviewTransition>, InferCreationAttributes<ReviewTransition>> {
  declare id: CreationOptional<number>;
  declare buildupId: number;
  declare fromState: ReviewState;
  declare toState: ReviewState;
  declare buildupVersion: number;
  declare actorId: number | null;
  declare comment: string | null;
  declare createdAt: CreationOptional<Date>;
  declare actor?: NonAttribute<User | null>;
}

export function initReviewModels(sequelize: Sequelize) {
  BuildupVersion.init(
    {
      buildupId: { type: DataTypes.INTEGER, primaryKey: true },
      version: { type: DataTypes.INTEGER, primaryKey: true },
      name: { type: DataTypes.STRING(120), allowNull: false },
      geometry: { type: DataTypes.JSONB, allowNull: false },
      velocity: { type: DataTypes.JSONB, allowNull: true },
      calibrationVersion: { type: DataTypes.INTEGER, allowNull: true },
      verticalDomain: { type: DataTypes.STRING(10), allowNull: false },
      note: { type: DataTypes.STRING(300), allowNull: true },
      savedById: { type: DataTypes.INTEGER, allowNull: true },
      savedAt: { type: DataTypes.DATE, allowNull: false },
    },
    { sequelize, tableName: 'buildup_versions', timestamps: false },
  );
  ReviewTransition.init(
    {
      id: { type: DataTypes.INTEGER, autoIncrement: true, primaryKey: true },
      buildupId: { type: DataTypes.INTEGER, allowNull: false },
      fromState: { type: DataTypes.STRING(20), allowNull: false },
      toState: { type: DataTypes.STRING(20), allowNull: false },
      buildupVersion: { type: DataTypes.INTEGER, allowNull: false },
      actorId: { type: DataTypes.INTEGER, allowNull: true },
      comment: { type: DataTypes.TEXT, allowNull: true },
      createdAt: DataTypes.DATE,
    },
    { sequelize, tableName: 'review_transitions', updatedAt: false },
  );
}
