/**
 * Demo data of the invented Tessel Basin scenario, seeded once (recorded in
 * app_meta). The password is for demonstration only.
 */
import { AppMeta, Project, ProjectMember, User } from '../../models/index';
import { hashPassword } from '../../services/auth.service';
import type { Role } from '../../../shared/schemas/auth';
import type { Sequelize } from 'sequelize';

export const DEMO_PASSWORD = 'cayline-demo';
export const DEMO_USERS: { email: string; name: string; role: Role }[] = [
  { email: 'admin@tessel.example', name: 'Ada Quarry', role: 'admin' },
  { email: 'interpreter@tessel.example', name: 'Ivo Marlstone', role: 'interpreter' },
  { email: 'curator@tessel.example', name: 'Cora Shoal', role: 'curator' },
  { email: 'reviewer@tessel.example', name: 'Remy Dunlin', role: 'reviewer' },
];
export const DEMO_PROJECT = {
  name: 'Tessel Basin screening',
  description: 'Screening of carbonate buildups on the TB-2024 survey (lines TB-11 and TB-14). Invented demo scenario.',
};

/** Seeds users and the demo project the first time; returns whether it did anything. */
export async function seedDemoUsers(sequelize: Sequelize): Promise<{ seeded: boolean; projectId: number | null }> {
  if (await AppMeta.findByPk('demo_users_seeded')) {
    const p = await Project.findOne({ where: { name: DEMO_PROJECT.name } });
    return { seeded: false, projectId: p?.id ?? null };
  }
  const hash = await hashPassword(DEMO_PASSWORD);
  const projectId = await sequelize.transaction(async (transaction) => {
    const users: User[] = [];
    for (const u of DEMO_USERS) {
      const [user] = await User.findOrCreate({ where: { email: u.email }, defaults: { ...u, passwordHash: hash }, transaction });
      users.push(user);
    }
    const interpreter = users.find((u) => u.role === 'interpreter')!;
    const project = await Project.create({ ...DEMO_PROJECT, createdById: interpreter.id }, { transaction });
    for (const u of users) {
      await ProjectMember.create({ projectId: project.id, userId: u.id, role: u.id === interpreter.id ? 'owner' : 'member' }, { transaction });
    }
    await AppMeta.create({ key: 'demo_users_seeded', value: { at: new Date().toISOString() } }, { transaction });
    return project.id;
  });
  return { seeded: true, projectId };
}
