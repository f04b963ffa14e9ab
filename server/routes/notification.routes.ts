import { Router } from 'express';
import { markReadSchema, notificationListQuerySchema, outboxQuerySchema, preferencesSchema } from '../../shared/schemas/notifications';
import { changePasswordSchema } from '../../shared/schemas/account';
import { validate } from '../middlewares/validate';
import { requireAuth, requireRole } from '../middlewares/auth';
import * as c from '../controllers/notification.controller';

/** /api/notifications: the bell. */
export function notificationRoutes() {
  const r = Router();
  r.get('/', requireAuth, validate(notificationListQuerySchema, 'query'), c.list);
  r.post('/read', requireAuth, validate(markReadSchema), c.markRead);
  return r;
}

/** /api/account: one's own settings and password. */
export function accountRoutes() {
  const r = Router();
  r.get('/preferences', requireAuth, c.getPreferences);
  r.put('/preferences', requireAuth, validate(preferencesSchema), c.putPreferences);
  r.post('/password', requireAuth, validate(changePasswordSchema), c.changePassword);
  return r;
}

/** /api/admin/mail: the Outbox (messages the local sink received). */
export function outboxRoutes() {
  const r = Router();
  r.get('/', requireAuth, requireRole('admin'), validate(outboxQuerySchema, 'query'), c.outboxList);
  r.get('/:id', requireAuth, requireRole('admin'), c.outboxRead);
  return r;
}
