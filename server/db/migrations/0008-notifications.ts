/**
 * Telling people: each person's notification preference (`users.notify_mode`:
 * immediate | digest | none), the in-app notifications (the bell) with their
 * e-mail state, single-use account links (invitation and password reset; only
 * the sha256 of a token is stored) and the Outbox (every message the local mail
 * sink received, parsed).
 */
import { DataTypes } from 'sequelize';
import type { MigrationContext } from './context';

export async function up({ queryInterface: q }: MigrationContext) {
  await q.addColumn('users', 'notify_mode', { type: DataTypes.STRING(10), allowNull: false, defaultValue: 'immediate' });
  await q.createTable('notifications', {
    id: { type: DataTypes.BIGINT, autoIncrement: true, primaryKey: true },
    recipient_id: { type: DataTypes.INTEGER, allowNull: false, references: { model: 'users', key: 'id' }, onDelete: 'CASCADE' },
    kind: { type: DataTypes.STRING(20), allowNull: false },
    project_id: { type: DataTypes.INTEGER, allowNull: false, references: { model: 'projects', key: 'id' }, onDelete: 'CASCADE' },
    actor_id: { type: DataTypes.INTEGER, allowNull: true, references: { model: 'users', key: 'id' }, onDelete: 'SET NULL' },
    subject: { type: DataTypes.STRING(200), allowNull: false },
    text: { type: DataTypes.TEXT, allowNull: false },
    link: { type: DataTypes.STRING(500), allowNull: false },
    read_at: { type: DataTypes.DATE, allowNull: true },
    /** 'pending' (to be mailed, now or in the digest), 'sent', 'skipped' (preference "none"). */
    email_state: { type: DataTypes.STRING(10), allowNull: false },
    emailed_at: { type: DataTypes.DATE, allowNull: true },
    created_at: { type: DataTypes.DATE, allowNull: false },
  });
  await q.addIndex('notifications', ['recipient_id', 'id']);
  await q.addIndex('notifications', ['recipient_id'], { where: { read_at: null }, name: 'notifications_unread' });
  await q.addIndex('notifications', ['email_state', 'recipient_id'], { where: { email_state: 'pending' }, name: 'notifications_unmailed' });

  await q.createTable('account_tokens', {
    id: { type: DataTypes.INTEGER, autoIncrement: true, primaryKey: true },
    user_id: { type: DataTypes.INTEGER, allowNull: false, references: { model: 'users', key: 'id' }, onDelete: 'CASCADE' },
    /** 'invite' (set a first password) or 'reset' (forgot password). */
    purpose: { type: DataTypes.STRING(10), allowNull: false },
    /** hex sha256 of the token; the token itself exists only in the mail. */
    token_hash: { type: DataTypes.STRING(64), allowNull: false, unique: true },
    expires_at: { type: DataTypes.DATE, allowNull: false },
    used_at: { type: DataTypes.DATE, allowNull: true },
    created_at: { type: DataTypes.DATE, allowNull: false },
  });
  await q.addIndex('account_tokens', ['user_id']);

  await q.createTable('mail_messages', {
    id: { type: DataTypes.INTEGER, autoIncrement: true, primaryKey: true },
    /** The sink's file name (unique: a file is imported once). */
    file: { type: DataTypes.STRING(120), allowNull: false, unique: true },
    message_id: { type: DataTypes.STRING(300), allowNull: true },
    sender: { type: DataTypes.STRING(400), allowNull: false },
    recipients: { type: DataTypes.JSONB, allowNull: false },
    subject: { type: DataTypes.STRING(400), allowNull: false },
    text: { type: DataTypes.TEXT, allowNull: false },
    links: { type: DataTypes.JSONB, allowNull: false },
    received_at: { type: DataTypes.DATE, allowNull: false },
  });
  await q.addIndex('mail_messages', ['received_at', 'id']);
}

export async function down({ queryInterface: q }: MigrationContext) {
  await q.dropTable('mail_messages');
  await q.dropTable('account_tokens');
  await q.dropTable('notifications');
  await q.removeColumn('users', 'notify_mode');
}
