/**
 * One's own account: single-use links mailed to people (an invitation to set a
 * first password, a reset after "forgot password"), changing one's password,
 * and the notification preference. A link's token is 32 random bytes; only its
 * sha256 is stored (`account_tokens`), so the table alone opens no account.
 * No password ever goes into an e-mail.
 */
import crypto from 'node:crypto';
import bcrypt from 'bcryptjs';
import { Op, QueryTypes, type Transaction } from 'sequelize';
import { AccountToken, Notification, type AccountTokenPurpose } from '../models/notification';
import { AuthSession, User } from '../models/index';
import { AppError, notFound } from '../errors';
import { ctx } from '../context';
import { logger } from '../logger';
import { audit } from './audit.service';
import { hashPassword } from './auth.service';
import { countAttempt, forgetAttempts } from './login-throttle.service';
import { trackMail } from './notify.service';
import type { ChangePasswordInput, SetPasswordInput } from '../../shared/schemas/account';
import type { NotifyMode } from '../../shared/schemas/notifications';

/** How many reset links one address may be sent per window; more requests get the same answer and no mail. */
const RESETS_PER_WINDOW = 3;

export const sha256 = (s: string) => crypto.createHash('sha256').update(s).digest('hex');

/** A password nobody knows (accounts invited to choose their own). */
export async function unusablePasswordHash(): Promise<string> {
  return hashPassword(crypto.randomBytes(32).toString('base64url'));
}

/** Create a single-use link for `userId` within `transaction`; returns its absolute URL and expiry. */
export async function createAccountLink(userId: number, purpose: AccountTokenPurpose, transaction: Transaction): Promise<{ url: string; expiresAt: Date }> {
  const token = crypto.randomBytes(32).toString('base64url');
  const { accountLinks, publicUrl } = ctx().config;
  const hours = purpose === 'invite' ? accountLinks.inviteHours : accountLinks.resetHours;
  const expiresAt = new Date(Date.now() + hours * 3600_000);
  await AccountToken.create({ userId, purpose, tokenHash: sha256(token), expiresAt }, { transaction });
  return { url: `${publicUrl.replace(/\/+$/, '')}/set-password?token=${token}`, expiresAt };
}

const when = (d: Date) => `${d.toISOString().slice(0, 16).replace('T', ' ')} UTC`;
const hoursText = (h: number) => (h === 1 ? '1 hour' : `${h} hours`);

/** The invitation mail (sent after the account's transaction committed). */
export function invitationMail(user: { email: string; name: string; role: string }, link: { url: string; expiresAt: Date }) {
  const { config } = ctx();
  return {
    to: user.email,
    subject: 'You are invited to Cayline',
    text:
      `Hello ${user.name},\n\nAn administrator created a Cayline account for you (${user.email}, role ${user.role}).\n\n` +
      `Choose your own password here:\n${link.url}\n\n` +
      `The link works once and expires in ${hoursText(config.accountLinks.inviteHours)} (${when(link.expiresAt)}). ` +
      `If it has expired, ask for a new one at ${config.publicUrl}/forgot-password.\n`,
  };
}

/**
 * "Forgot password": for an active account, a reset link by mail (at most
 * RESETS_PER_WINDOW per address in the rate window). The caller answers the
 * same whatever happens here, and does not wait for it, so the answer's timing
 * says nothing either.
 */
export function forgotPassword(email: string): void {
  trackMail(
    sendResetLink(email).catch((err) => logger.warn({ err }, 'password reset mail failed')),
  );
}

async function sendResetLink(email: string): Promise<void> {
  const { config, sequelize, mailer } = ctx();
  const user = await User.findOne({ where: { email: email.toLowerCase(), active: true } });
  if (!user) return;
  const link = await sequelize.transaction(async (transaction) => {
    await sequelize.query('SELECT id FROM users WHERE id = :id FOR UPDATE', { replacements: { id: user.id }, type: QueryTypes.SELECT, transaction });
    const recent = await AccountToken.count({
      where: { userId: user.id, purpose: 'reset', createdAt: { [Op.gt]: new Date(Date.now() - config.accountLinks.forgotRateLimit.windowMs) } },
      transaction,
    });
    if (recent >= RESETS_PER_WINDOW) return null;
    const l = await createAccountLink(user.id, 'reset', transaction);
    await audit(null, 'auth.reset_requested', 'user', user.id, null, transaction);
    return l;
  });
  if (!link) return;
  await mailer.send({
    to: user.email,
    subject: 'Choose a new Cayline password',
    text:
      `Hello ${user.name},\n\nSomeone asked to reset the password of your Cayline account (${user.email}).\n\n` +
      `Choose a new password here:\n${link.url}\n\n` +
      `The link works once and expires in ${hoursText(config.accountLinks.resetHours)} (${when(link.expiresAt)}). ` +
      `If you did not ask for this, ignore this mail: your password stays as it is.\n`,
  });
}

const linkRefusal = (status: number, code: string, message: string) => new AppError(status, code, `token: ${message}`, [{ path: 'token', message }]);

/**
 * Set a password from a mailed link: the link is used up (exactly once, even
 * under concurrent use), every other open link of the person is closed, and all
 * their sessions end.
 */
export async function setPasswordFromLink(input: SetPasswordInput): Promise<{ email: string }> {
  const hash = sha256(input.token);
  const passwordHash = await hashPassword(input.password);
  return ctx().sequelize.transaction(async (transaction) => {
    const [row] = await ctx().sequelize.query<{ user_id: number; purpose: AccountTokenPurpose }>(
      `UPDATE account_tokens SET used_at = now() WHERE token_hash = :hash AND used_at IS NULL AND expires_at > now() RETURNING user_id, purpose`,
      { replacements: { hash }, type: QueryTypes.SELECT, transaction },
    );
    if (!row) {
      const known = await AccountToken.findOne({ where: { tokenHash: hash }, transaction });
      if (!known) throw linkRefusal(400, 'link_invalid', 'this link is not valid; ask for a new one');
      if (known.usedAt) throw linkRefusal(410, 'link_used', 'this link has already been used; ask for a new one');
      throw linkRefusal(410, 'link_expired', 'this link has expired; ask for a new one');
    }
    const user = await User.findByPk(row.user_id, { transaction, lock: transaction.LOCK.UPDATE });
    if (!user || !user.active) throw linkRefusal(410, 'link_invalid', 'this link is not valid; ask for a new one');
    await user.update({ passwordHash }, { transaction });
    await AccountToken.update({ usedAt: new Date() }, { where: { userId: user.id, usedAt: null }, transaction });
    await AuthSession.update({ revokedAt: new Date() }, { where: { userId: user.id, revokedAt: null }, transaction });
    await audit(user.id, 'auth.password_set', 'user', user.id, { via: row.purpose }, transaction);
    return { email: user.email };
  });
}

/** Change one's own password (current one required); every other session of the person ends, this one stays. */
export async function changePassword(actorId: number, sessionId: string, input: ChangePasswordInput): Promise<void> {
  const user = await User.findByPk(actorId);
  if (!user) throw notFound('User');
  await countAttempt(user.email); // the same per-account delay as sign-in: no guessing the current password here
  if (!(await bcrypt.compare(input.currentPassword, user.passwordHash))) {
    throw new AppError(400, 'wrong_password', 'currentPassword: is not your current password', [{ path: 'currentPassword', message: 'is not your current password' }]);
  }
  await forgetAttempts(user.email);
  const passwordHash = await hashPassword(input.newPassword);
  await ctx().sequelize.transaction(async (transaction) => {
    await user.update({ passwordHash }, { transaction });
    await AuthSession.update({ revokedAt: new Date() }, { where: { userId: user.id, revokedAt: null, id: { [Op.ne]: sessionId } }, transaction });
    await AccountToken.update({ usedAt: new Date() }, { where: { userId: user.id, usedAt: null }, transaction });
    await audit(user.id, 'auth.password_changed', 'user', user.id, null, transaction);
  });
}

export async function getPreferences(actorId: number): Promise<{ notifyMode: NotifyMode }> {
  const user = await User.findByPk(actorId);
  if (!user) throw notFound('User');
  return { notifyMode: user.notifyMode };
}

/** Choosing "none" also drops what was waiting for the next digest. */
export async function setPreferences(actorId: number, notifyMode: NotifyMode): Promise<{ notifyMode: NotifyMode }> {
  return ctx().sequelize.transaction(async (transaction) => {
    const user = await User.findByPk(actorId, { transaction, lock: transaction.LOCK.UPDATE });
    if (!user) throw notFound('User');
    const before = user.notifyMode;
    await user.update({ notifyMode }, { transaction });
    if (notifyMode === 'none') {
      await Notification.update({ emailState: 'skipped' }, { where: { recipientId: actorId, emailState: 'pending' }, transaction });
    }
    await audit(actorId, 'account.preferences', 'user', actorId, { notifyMode, before }, transaction);
    return { notifyMode };
  });
}
