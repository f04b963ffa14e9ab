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
  /** Expiry (seconds since the epoch), set by jsonwebtoken. */
  exp?: number;
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
  const token = jwt.sign({ sid, role: user.role } satisfies Omit<TokenPayload, 'sub'>, jwtKey(ctx().config.jwtSecret), {
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

/**
 * The JWT secret as a key object, made once per secret: jsonwebtoken turns a
 * string into a key on every sign and verify (and first tries it as a PEM
 * public key, which throws), a measurable share of every signed-in request.
 */
const secretKeys = new Map<string, crypto.KeyObject>();
export function jwtKey(secret: string): crypto.KeyObject {
  let k = secretKeys.get(secret);
  if (!k) secretKeys.set(secret, (k = crypto.createSecretKey(Buffer.from(secret))));
  return k;
}

const UUID = /^[0-9a-f]{8}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{12}$/i;

/** Resolve a verified JWT payload to an active user with a live session, or null (one statement: session and user together). */
export async function userForPayload(payload: TokenPayload): Promise<User | null> {
  const userId = Number(payload.sub);
  if (!Number.isSafeInteger(userId) || String(userId) !== payload.sub || typeof payload.sid !== 'string' || !UUID.test(payload.sid)) return null;
  const users = await ctx().sequelize.query(
    `SELECT u.* FROM auth_sessions s JOIN users u ON u.id = s.user_id
      WHERE s.id = $1::uuid AND s.user_id = $2 AND s.revoked_at IS NULL AND s.expires_at > now() AND u.active`,
    { bind: [payload.sid, userId], model: User, mapToModel: true },
  );
  return users[0] ?? null;
}

export async function logout(sid: string) {
  await AuthSession.update({ revokedAt: new Date() }, { where: { id: sid } });
}

export async function revokeAllSessions(userId: number, transaction?: Transaction) {
  await AuthSession.update({ revokedAt: new Date() }, { where: { userId, revokedAt: null }, transaction });
}
