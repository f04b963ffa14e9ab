import crypto from 'node:crypto';
import bcrypt from 'bcryptjs';
import jwt from 'jsonwebtoken';
import type { Transaction } from 'sequelize';
import { AuthSession, User } from '../models/index';
import { AppError } from '../errors';
import { ctx } from '../context';
import type { LoginInput, LoginResult } from '../../shared/schemas/auth';
import { audit } from './audit.service';
import { countAttempt, forgetAttempts } from './login-throttle.service';

export const JWT_ALGORITHM = 'HS256' as const;

export interface TokenPayload {
  sub: string;
  sid: string;
  role: string;
}

// A fixed hash to compare against when the e-mail is unknown, so timing does not tell which part was wrong.
let dummyHash: string | null = null;

export async function hashPassword(password: string): Promise<string> {
  return bcrypt.hash(password, ctx().config.bcryptCost);
}

export async function login(input: LoginInput): Promise<LoginResult> {
  // Per-account delay first (throws 429 while held), the same for known and unknown addresses.
  await countAttempt(input.email);
  const user = await User.findOne({ where: { email: input.email } });
  dummyHash ??= await bcrypt.hash('not-a-real-password', ctx().config.bcryptCost);
  const ok = await bcrypt.compare(input.password, user?.passwordHash ?? dummyHash);
  if (!user || !ok || !user.active) {
    throw new AppError(401, 'invalid_credentials', 'The e-mail or password is not right, or the account is not active');
  }
  await forgetAttempts(input.email);
  return issueToken(user);
}

export async function issueToken(user: User, expiresIn: string = ctx().config.jwtExpiresIn): Promise<LoginResult> {
  const sid = crypto.randomUUID();
  const token = jwt.sign({ sid, role: user.role } satisfies Omit<TokenPayload, 'sub'>, ctx().config.jwtSecret, {
    algorithm: JWT_ALGORITHM,
    subject: String(user.id),
    expiresIn: expiresIn as jwt.SignOptions['expiresIn'],
  });
  const decoded = jwt.decode(token) as { exp: number };
  const expiresAt = new Date(decoded.exp * 1000);
  await ctx().sequelize.transaction(async (transaction) => {
    await AuthSession.create({ id: sid, userId: user.id, expiresAt }, { transaction });
    await audit(user.id, 'auth.login', 'user', user.id, null, transaction);
  });
  return { token, expiresAt: expiresAt.toISOString(), user: user.toPublic() };
}

/** Resolve a verified JWT payload to an active user with a live session, or null. */
export async function userForPayload(payload: TokenPayload): Promise<User | null> {
  const session = await AuthSession.findByPk(payload.sid);
  if (!session || session.revokedAt || session.expiresAt < new Date()) return null;
  if (String(session.userId) !== payload.sub) return null;
  const user = await User.findByPk(Number(payload.sub));
  if (!user || !user.active) return null;
  return user;
}

export async function logout(sid: string) {
  await AuthSession.update({ revokedAt: new Date() }, { where: { id: sid } });
}

export async function revokeAllSessions(userId: number, transaction?: Transaction) {
  await AuthSession.update({ revokedAt: new Date() }, { where: { userId, revokedAt: null }, transaction });
}
