/** A section's velocity model (measurement-spec §3), mounted at /api. */
import { Router } from 'express';
import { requireAuth } from '../middlewares/auth';
import { validate } from '../middlewares/validate';
import { putVelocitySchema } from '../../shared/schemas/buildups';
import * as c from '../controllers/velocity.controller';

export function velocityRoutes() {
  const r = Router();
  r.get('/sections/:id/velocity', requireAuth, c.get);
  r.put('/sections/:id/velocity', requireAuth, validate(putVelocitySchema), c.put);
  return r;
}
