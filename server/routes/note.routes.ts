import { Router } from 'express';
import { createThreadSchema, messageSchema, threadStateSchema } from '../../shared/schemas/notes';
import { validate } from '../middlewares/validate';
import { requireAuth } from '../middlewares/auth';
import * as c from '../controllers/note.controller';

/** Note pins and threads. Mounted at /api. Every member of the project (any role) may comment. */
export function noteRoutes() {
  const r = Router();
  r.get('/sections/:sectionId/threads', requireAuth, c.list);
  r.post('/sections/:sectionId/threads', requireAuth, validate(createThreadSchema), c.create);
  r.get('/threads/:id', requireAuth, c.get);
  r.patch('/threads/:id', requireAuth, validate(threadStateSchema), c.setState);
  r.post('/threads/:id/messages', requireAuth, validate(messageSchema), c.reply);
  r.patch('/messages/:id', requireAuth, validate(messageSchema), c.edit);
  r.delete('/messages/:id', requireAuth, c.remove);
  return r;
}
