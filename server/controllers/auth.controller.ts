import type { Request, Response } from 'express';
import * as auth from '../services/auth.service';
import { currentUser } from '../middlewares/auth';
import { LoginThrottledError } from '../services/login-throttle.service';

export async function login(_req: Request, res: Response) {
  try {
    res.json(await auth.login(res.locals.body));
  } catch (e) {
    if (e instanceof LoginThrottledError) res.set('Retry-After', String(e.retryAfterSeconds));
    throw e;
  }
}

export async function me(req: Request, res: Response) {
  res.json({ user: currentUser(req).toPublic() });
}

export async function logout(req: Request, res: Response) {
  await auth.logout((req as unknown as { sessionId: string }).sessionId);
  res.status(204).end();
}
