/** Users, sign-in sessions, projects and their members, audit trail. */
import { DataTypes } from 'sequelize';
import type { MigrationContext } from './context';

const id = { type: DataTypes.INTEGER, autoIncrement: true, primaryKey: true };
const stamps = {
  created_at: { type: DataTypes.DATE, allowNull: false, defaultValue: DataTypes.NOW },
  updated_at: { type: DataTypes.DATE, allowNull: false, defaultValue: DataTypes.NOW },
};

export async function up({ queryInterface: q }: MigrationContext) {
  await q.createTable('users', {
    id,
    email: { type: DataTypes.STRING(254), allowNull: false, unique: true },
    name: { type: DataTypes.STRING(120), allowNull: false },
    role: { type: DataTypes.STRING(20), allowNull: false },
    password_hash: { type: DataTypes.STRING(100), allowNull: false },
    active: { type: DataTypes.BOOLEAN, allowNull: false, defaultValue: true },
    ...stamps,
  });
  await q.sequelize.query(
    `ALTER TABLE users ADD CONSTRAINT users_role_check CHECK (role IN ('admin','interpreter','curator','reviewer'))`,
  );
  await q.createTable('auth_sessions', {
    id: { type: DataTypes.UUID, primaryKey: true },
    user_id: { type: DataTypes.INTEGER, allowNull: false, references: { model: 'users', key: 'id' }, onDelete: 'CASCADE' },
    expires_at: { type: DataTypes.DATE, allowNull: false },
    revoked_at: { type: DataTypes.DATE, allowNull: true },
    ...stamps,
  });
  await q.addIndex('auth_sessions', ['user_id']);
  await q.createTable('projects', {
    id,
    name: { type: DataTypes.STRING(120), allowNull: false },
    description: { type: DataTypes.TEXT, allowNull: false, defaultValue: '' },
    created_by_id: { type: DataTypes.INTEGER, allowNull: true, references: { model: 'users', key: 'id' }, onDelete: 'SET NULL' },
    version: { type: DataTypes.INTEGER, allowNull: false, defaultValue: 0 },
    ...stamps,
  });
  await q.createTable('project_members', {
    project_id: { type: DataTypes.INTEGER, primaryKey: true, references: { model: 'projects', key: 'id' }, onDelete: 'CASCADE' },
    user_id: { type: DataTypes.INTEGER, primaryKey: true, references: { model: 'users', key: 'id' }, onDelete: 'CASCADE' },
    ...stamps,
  });
  await q.addIndex('project_members', ['user_id']);
  await q.createTable('audit_events', {
    id: { type: DataTypes.BIGINT, autoIncrement: true, primaryKey: true },
    user_id: { type: DataTypes.INTEGER, allowNull: true, references: { model: 'users', key: 'id' }, onDelete: 'SET NULL' },
    action: { type: DataTypes.STRING(80), allowNull: false },
    target_type: { type: DataTypes.STRING(40), allowNull: true },
    target_id: { type: DataTypes.STRING(80), allowNull: true },
    details: { type: DataTypes.JSONB, allowNull: true },
    created_at: { type: DataTypes.DATE, allowNull: false, defaultValue: DataTypes.NOW },
  });
  await q.createTable('app_meta', {
    key: { type: DataTypes.STRING(80), primaryKey: true },
    value: { type: DataTypes.JSONB, allowNull: true },
  });
}

export async function down({ queryInterface: q }: MigrationContext) {
  for (const t of ['app_meta', 'audit_events', 'project_members', 'projects', 'auth_sessions', 'users']) await q.dropTable(t);
}
