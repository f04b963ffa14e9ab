/** A section's axis calibrations (versions of Ties), mounted at /api. */
import { Router } from 'express';
import { requireAuth } from '../middlewares/auth';
import { validate } from '../middlewares/validate';
import { calibrationInputSchema } from '../../shared/schemas/sections';
import * as c from '../controllers/calibration.controller';

export function calibrationRoutes() {
  const r = Router();
  r.get('/sections/:id/calibrations', requireAuth, c.list);
  r.put('/sections/:id/calibration', requireAuth, validate(calibrationInputSchema), c.save);
  r.post('/sections/:id/calibration/preview', requireAuth, validate(calibrationInputSchema), c.preview);
  return r;
}
