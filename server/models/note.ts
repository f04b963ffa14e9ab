/** NoteThread (a Note pin and its thread on a section) and NoteMessage. Bound from initModels. */
import { DataTypes, Model, type CreationOptional, type InferAttributes, type InferCreationAttributes, type NonAttribute, type Sequelize } from 'sequelize';
import type { NoteObjectRef } from '../../shared/notes/anchor';

export class NoteThread extends Model<InferAttributes<NoteThread>, InferCreationAttributes<NoteThread>> {
  declare id: CreationOptional<number>;
  declare sectionId: number;
  declare number: number;
  declare anchorKind: 'point' | 'object';
  declare buildupId: number | null;
  declare objectRef: NoteObjectRef | null;
  declare at: [number, number];
  declare objectRemoved: CreationOptional<boolean>;
  declare resolvedAt: CreationOptional<Date | null>;
  declare resolvedById: CreationOptional<number | null>;
  declare createdById: number | null;
  declare version: CreationOptional<number>;
  declare createdAt: CreationOptional<Date>;
  declare updatedAt: CreationOptional<Date>;
  declare messages?: NonAttribute<NoteMessage[]>;
}

export class NoteMessage extends Model<InferAttributes<NoteMessage>, InferCreationAttributes<NoteMessage>> {
  declare id: CreationOptional<number>;
  declare threadId: number;
  declare authorId: number | null;
  declare body: string;
  declare mentions: CreationOptional<number[]>;
  declare editedAt: CreationOptional<Date | null>;
  declare deletedAt: CreationOptional<Date | null>;
  declare version: CreationOptional<number>;
  declare createdAt: CreationOptional<Date>;
  declare updatedAt: CreationOptional<Date>;
}

export function initNoteModels(sequelize: Sequelize) {
  NoteThread.init(
    {
      id: { type: DataTypes.INTEGER, autoIncrement: true, primaryKey: true },
      sectionId: { type: DataTypes.INTEGER, allowNull: false },
      number: { type: DataTypes.INTEGER, allowNull: false },
      anchorKind: { type: DataTypes.STRING(10), allowNull: false },
      buildupId: { type: DataTypes.INTEGER, allowNull: true },
      objectRef: { type: DataTypes.JSONB, allowNull: true },
      at: { type: DataTypes.JSONB, allowNull: false },
      objectRemoved: { type: DataTypes.BOOLEAN, allowNull: false, defaultValue: false },
      resolvedAt: { type: DataTypes.DATE, allowNull: true },
      resolvedById: { type: DataTypes.INTEGER, allowNull: true },
      createdById: { type: DataTypes.INTEGER, allowNull: true },
      version: { type: DataTypes.INTEGER, allowNull: false, defaultValue: 0 },
      createdAt: DataTypes.DATE,
      updatedAt: DataTypes.DATE,
    },
    { sequelize, tableName: 'note_threads', version: true },
  );
  NoteMessage.init(
    {
      id: { type: DataTypes.INTEGER, autoIncrement: true, primaryKey: true },
      threadId: { type: DataTypes.INTEGER, allowNull: false },
      authorId: { type: DataTypes.INTEGER, allowNull: true },
      body: { type: DataTypes.TEXT, allowNull: false },
      mentions: { type: DataTypes.JSONB, allowNull: false, defaultValue: [] },
      editedAt: { type: DataTypes.DATE, allowNull: true },
      deletedAt: { type: DataTypes.DATE, allowNull: true },
      version: { type: DataTypes.INTEGER, allowNull: false, defaultValue: 0 },
      createdAt: DataTypes.DATE,
      updatedAt: DataTypes.DATE,
    },
    { sequelize, tableName: 'note_messages', version: true },
  );
}
