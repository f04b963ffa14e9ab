/**
 * Project owners and the per-account sign-in delay.
 *
 * - `project_members.role`: 'owner' | 'member', at most one owner per project.
 *   Existing projects: the creator when still a member, otherwise the
 *   earliest-joined interpreter or admin member; a project with neither keeps
 *   no owner until an admin names one.
 * - `login_throttles`: failed sign-ins per e-mail (keyed by an HMAC of the
 *   address, so unknown addresses are treated like known ones and none is
 *   stored in clear), shared by every server process.
 */
import { DataTypes } from 'sequelize';
import type { MigrationContext } from './context';

export async function up({ queryInterface: q, sequelize }: MigrationContext) {
  await q.addColumn('project_members', 'role', { type: DataTypes.STRING(10), allowNull: false, defaultValue: 'member' });
  await sequelize.query(`ALTER TABLE project_members ADD CONSTRAINT project_members_role_check CHECK (role IN ('owner','member'))`);
  await sequelize.query(`CREATE UNIQUE INDEX project_members_one_owner ON project_members (project_id) WHERE role = 'owner'`);
  await sequelize.query(`
    UPDATE project_members pm SET role = 'owner'
      FROM projects p
     WHERE p.id = pm.project_id AND p.created_by_id = pm.user_id`);
  await sequelize.query(`
    UPDATE project_members pm SET role = 'owner'
      FROM (
        SELECT DISTINCT ON (m.project_id) m.project_id, m.user_id
          FROM project_members m JOIN users u ON u.id = m.user_id
         WHERE u.role IN ('interpreter','admin')
           AND NOT EXISTS (SELECT 1 FROM project_members o WHERE o.project_id = m.project_id AND o.role = 'owner')
         ORDER BY m.project_id, m.created_at, m.user_id
      ) pick
     WHERE pm.project_id = pick.project_id AND pm.user_id = pick.user_id`);

  await q.createTable('login_throttles', {
    key: { type: DataTypes.CHAR(64), primaryKey: true },
    failed_count: { type: DataTypes.INTEGER, allowNull: false, defaultValue: 0 },
    last_attempt_at: { type: DataTypes.DATE, allowNull: false },
    locked_until: { type: DataTypes.DATE, allowNull: true },
  });
  await q.addIndex('login_throttles', ['last_attempt_at']);
}

export async function down({ queryInterface: q, sequelize }: MigrationContext) {
  await q.dropTable('login_throttles');
  await sequelize.query(`DROP INDEX IF EXISTS project_members_one_owner`);
  await q.removeColumn('project_members', 'role');
}
