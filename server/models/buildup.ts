/** Buildup (traced geometry in pixels, optimistic locking) and SectionVelocity. Bound from initModels. */
import { DataTypes, Model, type CreationOptional, type InferAttributes, type InferCreationAttributes, type NonAttribute, type Sequelize } from 'sequelize';
import type { User } from './core';
import type { BuildupGeometry } from '../../shared/editor/model';
import type { ReviewState } from '../../shared/schemas/review';

export class Buildup extends Model<InferAttributes<Buildup>, InferCreationAttributes<Buildup>> {
  declare id: CreationOptional<number>;
  declare sectionId: number;
  declare name: string;
  declare geometry: BuildupGeometry;
  declare version: CreationOptional<number>;
  /** 'draft' | 'out_for_review' | 'needs_rework' | 'signed_off' (shared/schemas/review.ts). */
  declare reviewState: CreationOptional<ReviewState>;
  declare signedOffVersion: CreationOptional<number | null>;
  declare signedOffById: CreationOptional<number | null>;
  declare signedOffAt: CreationOptional<Date | null>;
  declare createdById: number | null;
  declare updatedById: number | null;
  declare createdAt: CreationOptional<Date>;
  declare updatedAt: CreationOptional<Date>;
  declare updatedBy?: NonAttribute<User | null>;
}

export class SectionVelocity extends Model<InferAttributes<SectionVelocity>, InferCreationAttributes<SectionVelocity>> {
  declare sectionId: number;
  declare model: unknown;
  declare updatedById: number | null;
  declare updatedAt: CreationOptional<Date>;
}

export function initBuildupModels(sequelize: Sequelize) {
  Buildup.init(
    {
      id: { type: DataTypes.INTEGER, autoIncrement: true, primaryKey: true },
      sectionId: { type: DataTypes.INTEGER, allowNull: false },
      name: { type: DataTypes.STRING(120), allowNull: false },
      geometry: { type: DataTypes.JSONB, allowNull: false },
      version: { type: DataTypes.INTEGER, allowNull: false, defaultValue: 0 },
      reviewState: { type: DataTypes.STRING(20), allowNull: false, defaultValue: 'draft' },
      signedOffVersion: { type: DataTypes.INTEGER, allowNull: true },
      signedOffById: { type: DataTypes.INTEGER, allowNull: true },
      signedOffAt: { type: DataTypes.DATE, allowNull: true },
      createdById: { type: DataTypes.INTEGER, allowNull: true },
      updatedById: { type: DataTypes.INTEGER, allowNull: true },
      createdAt: DataTypes.DATE,
      updatedAt: DataTypes.DATE,
    },
    { sequelize, tableName: 'buildups' },
  );
  SectionVelocity.init(
    {
      sectionId: { type: DataTypes.INTEGER, primaryKey: true },
      model: { type: DataTypes.JSONB, allowNull: false },
      updatedById: { type: DataTypes.INTEGER, allowNull: true },
      updatedAt: DataTypes.DATE,
    },
    { sequelize, tableName: 'section_velocities', createdAt: false },
  );
}
