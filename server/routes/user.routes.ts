import { Router } from 'express';
import { createUserSchema, directoryQuerySchema, updateUserSchema } from '../../shared/schemas/users';
import { listQuerySchema } from '../../shared/schemas/projects';
import { validate } from '../middlewares/validate';
import { requireAuth, requireRole } from '../middlewares/auth';
import * as c from '../controllers/user.controller';

export function userRoutes() {
  const r = Router();
  r.get('/directory', requireAuth, validate(directoryQuerySchema, 'query'), c.directory);
  r.get('/', requireAuth, requireRole('admin'), validate(listQuerySchema, 'query'), c.list);
  r.post('/', requireAuth, requireRole('admin'), validate(createUserSchema), c.create);
  r.patch('/:id', requireAuth, requireRole('admin'), validate(updateUserSchema), c.update);
  return r;
}
