import { Router } from 'express';
import { addMemberSchema, createProjectSchema, listQuerySchema, transferOwnerSchema, updateProjectSchema } from '../../shared/schemas/projects';
import { validate } from '../middlewares/validate';
import { requireAuth, requireRole } from '../middlewares/auth';
import * as c from '../controllers/project.controller';

export function projectRoutes() {
  const r = Router();
  r.use(requireAuth);
  r.get('/', validate(listQuerySchema, 'query'), c.list);
  r.post('/', requireRole('admin', 'interpreter'), validate(createProjectSchema), c.create);
  r.get('/:id', c.get);
  r.patch('/:id', validate(updateProjectSchema), c.update);
  r.delete('/:id', c.remove);
  r.get('/:id/members', c.members);
  r.post('/:id/members', validate(addMemberSchema), c.addMember);
  r.delete('/:id/members/:userId', c.removeMember);
  r.put('/:id/owner', validate(transferOwnerSchema), c.transferOwner);
  return r;
}
