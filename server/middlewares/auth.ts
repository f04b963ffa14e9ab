import passport from 'passport';
import { Strategy as JwtStrategy, ExtractJwt } from 'passport-jwt';
import type { RequestHandler } from 'express';
import { AppError } from '../errors';
import { ctx } from '../context';
import { JWT_ALGORITHM, jwtKey, userForPayload, type TokenPayload } from '../services/auth.service';
import type { User } from '../models/index';
import type { Role } from '../../shared/schemas/auth';

declare global {
  // eslint-disable-next-line @typescript-eslint/no-namespace
  namespace Express {
    interface User {
      id: number;
      role: Role;
    }
  }
}

/** The bearer token of a request, as passport-jwt reads it. */
const bearerToken = ExtractJwt.fromAuthHeaderAsBearerToken();

/** Register the JWT strategy (passport 0.7 needs no `initialize()` middleware for session-less strategies). */
export function configurePassport(secret: string) {
  passport.use(
    new JwtStrategy(
      {
        jwtFromRequest: bearerToken,
        secretOrKey: jwtKey(secret) as unknown as string, // passport-jwt hands it to jsonwebtoken, which takes a KeyObject
        algorithms: [JWT_ALGORITHM],
        passReqToCallback: true,
      },
      (req: any, payload: TokenPayload, done: (e: unknown, u?: unknown) => void) => {
        userForPayload(payload)
          .then((user) => {
            if (!user) return done(null, false);
            req.sessionId = payload.sid;
            req.tokenExpiresAt = (payload.exp ?? 0) * 1000;
            done(null, user);
          })
          .catch(done);
      },
    ),
  );
}

/**
 * Require a signed-in user (a valid, unrevoked token of an active account).
 * A token verified a moment ago is answered from the process's session cache
 * (server/services/session-cache.ts: emptied by NOTIFY on every session or
 * account change, used only while that listener is connected); any other
 * goes through passport-jwt and PostgreSQL.
 */
export const requireAuth: RequestHandler = (req, res, next) => {
  const sessions = ctx().sessions;
  const token = sessions?.active ? bearerToken(req) : null;
  const kept = token ? sessions!.lookup(token) : undefined;
  if (kept) {
    req.user = kept.user as unknown as Express.User;
    (req as unknown as { sessionId: string }).sessionId = kept.sid;
    return next();
  }
  const ticket = sessions?.ticket() ?? 0;
  passport.authenticate('jwt', { session: false }, (err: unknown, user: User | false) => {
    if (err) return next(err);
    if (!user) return next(new AppError(401, 'unauthorized', 'Sign in first (the token is missing, expired or signed out)'));
    req.user = user as unknown as Express.User;
    const r = req as unknown as { sessionId: string; tokenExpiresAt: number };
    if (token && sessions) sessions.remember(token, { user, sid: r.sessionId, expiresAt: r.tokenExpiresAt }, ticket);
    next();
  })(req, res, next);
};

/** Require one of the global roles (after requireAuth). */
export function requireRole(...roles: Role[]): RequestHandler {
  const handler: RequestHandler = (req, _res, next) => {
    if (!req.user || !roles.includes(req.user.role)) {
      return next(new AppError(403, 'forbidden', `Only ${roles.join(' or ')} accounts may do this`));
    }
    next();
  };
  Object.defineProperty(handler, REQUIRED_ROLES, { value: roles }); // read by the OpenAPI document
  return handler;
}

/** Key of the global roles a `requireRole()` handler lets through. */
export const REQUIRED_ROLES = Symbol('requiredRoles');

export function currentUser(req: Express.Request): User {
  return req.user as unknown as User;
}
