/** Accounts, projects, members, audit events and app metadata: the models every other one refers to. */
import {
  DataTypes,
  Model,
  type CreationOptional,
  type ForeignKey,
  type InferAttributes,
  type InferCreationAttributes,
  type NonAttribute,
  type Sequelize,
} from 'sequelize';
import type { Role, PublicUser } from '../../shared/schemas/auth';
import type { NotifyMode } from '../../shared/schemas/notifications';

export class User extends Model<InferAttributes<User>, InferCreationAttributes<User>> {
  declare id: CreationOptional<number>;
  declare email: string;
  declare name: string;
  declare role: Role;
  declare passwordHash: string;
  declare active: CreationOptional<boolean>;
  /** How this person hears of notifications by e-mail (migration 0008). */
  declare notifyMode: CreationOptional<NotifyMode>;
  declare createdAt: CreationOptional<Date>;
  declare updatedAt: CreationOptional<Date>;

  toPublic(): PublicUser {
    return {
      id: this.id,
      email: this.email,
      name: this.name,
      role: this.role,
      active: this.active,
      createdAt: this.createdAt?.toISOString(),
    };
  }
}

export class AuthSession extends Model<InferAttributes<AuthSession>, InferCreationAttributes<AuthSession>> {
  declare id: string;
  declare userId: ForeignKey<User['id']>;
  declare expiresAt: Date;
  declare revokedAt: CreationOptional<Date | null>;
  declare createdAt: CreationOptional<Date>;
  declare updatedAt: CreationOptional<Date>;
}

export class Project extends Model<InferAttributes<Project>, InferCreationAttributes<Project>> {
  declare id: CreationOptional<number>;
  declare name: string;
  declare description: CreationOptional<string>;
  declare createdById: ForeignKey<User['id']> | null;
  declare version: CreationOptional<number>;
  declare createdAt: CreationOptional<Date>;
  declare updatedAt: CreationOptional<Date>;
  declare members?: NonAttribute<User[]>;
  declare createdBy?: NonAttribute<User | null>;
}

export type ProjectRole = 'owner' | 'member';

export class ProjectMember extends Model<InferAttributes<ProjectMember>, InferCreationAttributes<ProjectMember>> {
  declare projectId: number;
  declare userId: number;
  /** One owner per project (migration 0004); everyone else is a member. */
  declare role: CreationOptional<ProjectRole>;
  declare createdAt: CreationOptional<Date>;
  declare updatedAt: CreationOptional<Date>;
}

export class AuditEvent extends Model<InferAttributes<AuditEvent>, InferCreationAttributes<AuditEvent>> {
  declare id: CreationOptional<number>;
  declare userId: number | null;
  declare action: string;
  declare targetType: string | null;
  declare targetId: string | null;
  declare details: unknown;
  declare createdAt: CreationOptional<Date>;
}

export class AppMeta extends Model<InferAttributes<AppMeta>, InferCreationAttributes<AppMeta>> {
  declare key: string;
  declare value: unknown;
}

export function initCoreModels(sequelize: Sequelize) {
  const stamps = { createdAt: DataTypes.DATE, updatedAt: DataTypes.DATE };
  User.init(
    {
      id: { type: DataTypes.INTEGER, autoIncrement: true, primaryKey: true },
      email: { type: DataTypes.STRING(254), allowNull: false, unique: true },
      name: { type: DataTypes.STRING(120), allowNull: false },
      role: { type: DataTypes.STRING(20), allowNull: false },
      passwordHash: { type: DataTypes.STRING(100), allowNull: false },
      active: { type: DataTypes.BOOLEAN, allowNull: false, defaultValue: true },
      notifyMode: { type: DataTypes.STRING(10), allowNull: false, defaultValue: 'immediate' },
      ...stamps,
    },
    { sequelize, tableName: 'users' },
  );
  AuthSession.init(
    {
      id: { type: DataTypes.UUID, primaryKey: true },
      expiresAt: { type: DataTypes.DATE, allowNull: false },
      revokedAt: { type: DataTypes.DATE, allowNull: true },
      ...stamps,
    },
    { sequelize, tableName: 'auth_sessions' },
  );
  Project.init(
    {
      id: { type: DataTypes.INTEGER, autoIncrement: true, primaryKey: true },
      name: { type: DataTypes.STRING(120), allowNull: false },
      description: { type: DataTypes.TEXT, allowNull: false, defaultValue: '' },
      version: { type: DataTypes.INTEGER, allowNull: false, defaultValue: 0 },
      ...stamps,
    },
    { sequelize, tableName: 'projects', version: true },
  );
  ProjectMember.init(
    {
      projectId: { type: DataTypes.INTEGER, primaryKey: true },
      userId: { type: DataTypes.INTEGER, primaryKey: true },
      role: { type: DataTypes.STRING(10), allowNull: false, defaultValue: 'member' },
      ...stamps,
    },
    { sequelize, tableName: 'project_members' },
  );
  AuditEvent.init(
    {
      id: { type: DataTypes.BIGINT, autoIncrement: true, primaryKey: true },
      userId: { type: DataTypes.INTEGER, allowNull: true },
      action: { type: DataTypes.STRING(80), allowNull: false },
      targetType: { type: DataTypes.STRING(40), allowNull: true },
      targetId: { type: DataTypes.STRING(80), allowNull: true },
      details: { type: DataTypes.JSONB, allowNull: true },
      createdAt: DataTypes.DATE,
    },
    { sequelize, tableName: 'audit_events', updatedAt: false },
  );
  AppMeta.init(
    { key: { type: DataTypes.STRING(80), primaryKey: true }, value: { type: DataTypes.JSONB } },
    { sequelize, tableName: 'app_meta', timestamps: false },
  );
}
