import { Router } from 'express';
import { z } from 'zod';
import { reviewTransitionSchema } from '../../shared/schemas/review';
import { validate } from '../middlewares/validate';
import { requireAuth } from '../middlewares/auth';
import * as c from '../controllers/review.controller';

/** Thresholds a reader may change when asking for a kept version's measurements (as for the live buildup). */
const measurementQuery = z.object({
  aggradingToleranceDeg: z.coerce.number().optional(),
  drownedMinTerminations: z.coerce.number().optional(),
  draws: z.coerce.number().optional(),
});

/** Review states and kept versions of buildups. Mounted at /api. */
export function reviewRoutes() {
  const r = Router();
  r.get('/buildups/:id/review', requireAuth, c.get);
  r.post('/buildups/:id/review', requireAuth, validate(reviewTransitionSchema), c.transition);
  r.get('/buildups/:id/versions', requireAuth, c.versions);
  r.get('/buildups/:id/versions/:version', requireAuth, c.version);
  r.get('/buildups/:id/versions/:version/measurements', requireAuth, validate(measurementQuery, 'query'), c.versionMeasurements);
  return r;
}
