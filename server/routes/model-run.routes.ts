import { Router } from 'express';
import { modelRunCreateSchema } from '../../shared/schemas/model-runs';
import { validate } from '../middlewares/validate';
import { requireAuth } from '../middlewares/auth';
import * as c from '../controllers/model-run.controller';

/** Saved forward-model runs of buildups. Mounted at /api. */
export function modelRunRoutes() {
  const r = Router();
  r.get('/buildups/:id/model-runs', requireAuth, c.list);
  r.post('/buildups/:id/model-runs', requireAuth, validate(modelRunCreateSchema), c.create);
  r.get('/model-runs/:id', requireAuth, c.get);
  r.delete('/model-runs/:id', requireAuth, c.remove);
  return r;
}
