/**
 * Note pins and their threads. A thread belongs to a section and carries a
 * number per section; its pin is anchored to a point of the image or to an
 * object of a buildup (`object_ref`), whose last known position is kept in
 * `at` (updated on every save of the buildup). When the object or its buildup
 * is deleted, the thread stays with `object_removed` set, at its last
 * position. Messages keep their author, body, mentions, an edit mark and a
 * tombstone when deleted.
 */
import { DataTypes } from 'sequelize';
import type { MigrationContext } from './context';

export async function up({ queryInterface: q }: MigrationContext) {
  await q.createTable('note_threads', {
    id: { type: DataTypes.INTEGER, autoIncrement: true, primaryKey: true },
    section_id: { type: DataTypes.INTEGER, allowNull: false, references: { model: 'sections', key: 'id' }, onDelete: 'CASCADE' },
    number: { type: DataTypes.INTEGER, allowNull: false },
    anchor_kind: { type: DataTypes.STRING(10), allowNull: false },
    /** Kept when the buildup is deleted (object_removed), so no foreign key. */
    buildup_id: { type: DataTypes.INTEGER, allowNull: true },
    object_ref: { type: DataTypes.JSONB, allowNull: true },
    at: { type: DataTypes.JSONB, allowNull: false },
    object_removed: { type: DataTypes.BOOLEAN, allowNull: false, defaultValue: false },
    resolved_at: { type: DataTypes.DATE, allowNull: true },
    resolved_by_id: { type: DataTypes.INTEGER, allowNull: true, references: { model: 'users', key: 'id' }, onDelete: 'SET NULL' },
    created_by_id: { type: DataTypes.INTEGER, allowNull: true, references: { model: 'users', key: 'id' }, onDelete: 'SET NULL' },
    version: { type: DataTypes.INTEGER, allowNull: false, defaultValue: 0 },
    created_at: { type: DataTypes.DATE, allowNull: false, defaultValue: DataTypes.NOW },
    updated_at: { type: DataTypes.DATE, allowNull: false, defaultValue: DataTypes.NOW },
  });
  await q.addIndex('note_threads', ['section_id', 'number'], { unique: true, name: 'note_threads_section_number' });
  await q.addIndex('note_threads', ['buildup_id']);
  await q.createTable('note_messages', {
    id: { type: DataTypes.INTEGER, autoIncrement: true, primaryKey: true },
    thread_id: { type: DataTypes.INTEGER, allowNull: false, references: { model: 'note_threads', key: 'id' }, onDelete: 'CASCADE' },
    author_id: { type: DataTypes.INTEGER, allowNull: true, references: { model: 'users', key: 'id' }, onDelete: 'SET NULL' },
    body: { type: DataTypes.TEXT, allowNull: false },
    /** User ids mentioned in the body. */
    mentions: { type: DataTypes.JSONB, allowNull: false, defaultValue: [] },
    edited_at: { type: DataTypes.DATE, allowNull: true },
    deleted_at: { type: DataTypes.DATE, allowNull: true },
    version: { type: DataTypes.INTEGER, allowNull: false, defaultValue: 0 },
    created_at: { type: DataTypes.DATE, allowNull: false, defaultValue: DataTypes.NOW },
    updated_at: { type: DataTypes.DATE, allowNull: false, defaultValue: DataTypes.NOW },
  });
  await q.addIndex('note_messages', ['thread_id', 'id']);
}

export async function down({ queryInterface: q }: MigrationContext) {
  await q.dropTable('note_messages');
  await q.dropTable('note_threads');
}
