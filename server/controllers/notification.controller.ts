import type { Request, Response } from 'express';
import * as notifications from '../services/notification.service';
import * as account from '../services/account.service';
import * as outbox from '../mail/outbox';
import { idParam } from '../middlewares/params';
import { FORGOT_PASSWORD_ANSWER } from '../../shared/schemas/account';

export async function list(req: Request, res: Response) {
  res.json(await notifications.listNotifications(req.user!.id, res.locals.query));
}

export async function markRead(req: Request, res: Response) {
  res.json(await notifications.markRead(req.user!.id, res.locals.body));
}

export async function getPreferences(req: Request, res: Response) {
  res.json(await account.getPreferences(req.user!.id));
}

export async function putPreferences(req: Request, res: Response) {
  res.json(await account.setPreferences(req.user!.id, res.locals.body.notifyMode));
}

export async function changePassword(req: Request, res: Response) {
  await account.changePassword(req.user!.id, (req as unknown as { sessionId: string }).sessionId, res.locals.body);
  res.status(204).end();
}

/** Always the same 202 answer, whether the address has an account or not. */
export function forgotPassword(_req: Request, res: Response) {
  account.forgotPassword(res.locals.body.email);
  res.status(202).json({ message: FORGOT_PASSWORD_ANSWER });
}

export async function setPassword(_req: Request, res: Response) {
  res.json(await account.setPasswordFromLink(res.locals.body));
}

export async function outboxList(_req: Request, res: Response) {
  res.json(await outbox.listOutbox(res.locals.query));
}

export async function outboxRead(req: Request, res: Response) {
  res.json(await outbox.readOutboxMessage(idParam(req)));
}
