import { Router } from 'express';
import rateLimit from 'express-rate-limit';
import { loginSchema } from '../../shared/schemas/auth';
import { validate } from '../middlewares/validate';
import { requireAuth } from '../middlewares/auth';
import { jsonBody } from '../middlewares/body';
import { AppError } from '../errors';
import * as c from '../controllers/auth.controller';
import * as account from '../controllers/notification.controller';
import { forgotPasswordSchema, setPasswordSchema } from '../../shared/schemas/account';
import type { Config } from '../config';
import { PgRateLimitStore } from '../middlewares/rate-limit-store';

export function authRoutes(config: Config) {
  const limiter = rateLimit({
    windowMs: config.loginRateLimit.windowMs,
    limit: config.loginRateLimit.max,
    store: new PgRateLimitStore('login:'), // counters shared by every web process (PostgreSQL)
    standardHeaders: 'draft-8',
    legacyHeaders: false,
    handler: (_req, _res, next) => next(new AppError(429, 'rate_limited', 'Too many sign-in attempts; wait a few minutes and try again')),
  });
  // "forgot password" and links: limited per address like sign-in (each has its own counter)
  const forgotLimiter = rateLimit({
    windowMs: config.accountLinks.forgotRateLimit.windowMs,
    limit: config.accountLinks.forgotRateLimit.max,
    store: new PgRateLimitStore('forgot:'),
    standardHeaders: 'draft-8',
    legacyHeaders: false,
    handler: (_req, _res, next) => next(new AppError(429, 'rate_limited', 'Too many password reset requests; wait a few minutes and try again')),
  });
  const linkLimiter = rateLimit({
    windowMs: config.loginRateLimit.windowMs,
    limit: config.loginRateLimit.max,
    store: new PgRateLimitStore('link:'),
    standardHeaders: 'draft-8',
    legacyHeaders: false,
    handler: (_req, _res, next) => next(new AppError(429, 'rate_limited', 'Too many attempts; wait a few minutes and try again')),
  });
  const r = Router();
  r.post('/login', limiter, jsonBody('signIn'), validate(loginSchema), c.login);
  r.post('/forgot-password', forgotLimiter, jsonBody('signIn'), validate(forgotPasswordSchema), account.forgotPassword);
  r.post('/set-password', linkLimiter, jsonBody('signIn'), validate(setPasswordSchema), account.setPassword);
  r.get('/me', requireAuth, c.me);
  r.post('/logout', requireAuth, c.logout);
  return r;
}
