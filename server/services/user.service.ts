import { Op, UniqueConstraintError } from 'sequelize';
import { User } from '../models/index';
import { AppError, notFound } from '../errors';
import { hashPassword, revokeAllSessions } from './auth.service';
import { audit } from './audit.service';
import { createAccountLink, invitationMail, unusablePasswordHash } from './account.service';
import { ctx } from '../context';
import type { CreateUserInput, DirectoryEntry, DirectoryQuery, UpdateUserInput } from '../../shared/schemas/users';
import type { Page } from '../../shared/schemas/projects';
import type { PublicUser } from '../../shared/schemas/auth';

export async function listUsers(q: { q?: string; page: number; pageSize: number }): Promise<Page<PublicUser>> {
  const where = q.q
    ? { [Op.or]: [{ name: { [Op.iLike]: `%${q.q}%` } }, { email: { [Op.iLike]: `%${q.q}%` } }] }
    : {};
  const { rows, count } = await User.findAndCountAll({
    where,
    order: [['name', 'ASC']],
    limit: q.pageSize,
    offset: (q.page - 1) * q.pageSize,
  });
  return { items: rows.map((u) => u.toPublic()), total: count, page: q.page, pageSize: q.pageSize };
}

/**
 * Active people the asker may see in pickers: admins see everyone; others see
 * the people they share at least one project with. With `email` (an exact
 * address, compared lower-cased) the answer is that one person: found
 * anywhere by those who may add members (admins, interpreters), otherwise only
 * among the people already shared with, so nobody can probe for accounts.
 */
export async function directory(actor: { id: number; role: string }, q: DirectoryQuery = {}): Promise<DirectoryEntry[]> {
  const where: Record<string | symbol, unknown> = { active: true };
  if (q.email) where.email = q.email.toLowerCase();
  const findsAnyone = actor.role === 'admin' || (q.email !== undefined && actor.role === 'interpreter');
  if (!findsAnyone) {
    where.id = {
      [Op.in]: ctx().sequelize.literal(
        `(SELECT other.user_id FROM project_members mine JOIN project_members other ON other.project_id = mine.project_id WHERE mine.user_id = ${Number(actor.id)})`,
      ),
    };
  }
  const users = await User.findAll({ where, order: [['name', 'ASC']] });
  return users.map((u) => ({ id: u.id, name: u.name, email: u.email, role: u.role }));
}

export async function createUser(actorId: number | null, input: CreateUserInput): Promise<PublicUser> {
  // Without a password the person is invited: a single-use link to choose their own (no password in any mail).
  const invited = !input.password;
  const passwordHash = input.password ? await hashPassword(input.password) : await unusablePasswordHash();
  let created: { user: User; link: { url: string; expiresAt: Date } | null };
  try {
    created = await ctx().sequelize.transaction(async (transaction) => {
      const u = await User.create({ email: input.email, name: input.name, role: input.role, passwordHash }, { transaction });
      const link = invited ? await createAccountLink(u.id, 'invite', transaction) : null;
      await audit(actorId, 'user.create', 'user', u.id, { role: input.role, invited }, transaction);
      return { user: u, link };
    });
  } catch (e) {
    if (e instanceof UniqueConstraintError) throw new AppError(409, 'email_taken', 'email: an account with this e-mail already exists');
    throw e;
  }
  const { user, link } = created;
  if (link) await ctx().mailer.send(invitationMail(user, link));
  return user.toPublic();
}

export async function updateUser(actorId: number, id: number, input: UpdateUserInput): Promise<PublicUser> {
  const user = await User.findByPk(id);
  if (!user) throw notFound('User');
  if (id === actorId && (input.active === false || (input.role && input.role !== 'admin'))) {
    throw new AppError(400, 'validation_failed', 'role: you cannot demote or deactivate your own account');
  }
  await ctx().sequelize.transaction(async (transaction) => {
    await user.update(input, { transaction });
    if (input.active === false) await revokeAllSessions(user.id, transaction);
    await audit(actorId, 'user.update', 'user', user.id, input, transaction);
  });
  return user.toPublic();
}
