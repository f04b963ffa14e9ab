import { Router } from 'express';
import { z } from 'zod';
import { createBuildupSchema, putVelocitySchema, saveBuildupSchema } from '../../shared/schemas/buildups';
import { validate } from '../middlewares/validate';
import { requireAuth } from '../middlewares/auth';
import * as c from '../controllers/buildup.controller';

/** Thresholds a reader may change when asking for a stored buildup's measurements. */
const measurementQuery = z.object({
  aggradingToleranceDeg: z.coerce.number().optional(),
  drownedMinTerminations: z.coerce.number().optional(),
  draws: z.coerce.number().optional(),
});

const measureBody = z.object(
  { interpretation: z.record(z.string(), z.unknown(), { error: 'is required: an interpretation object (measurement-spec §4)' }), options: z.unknown().optional() },
  { error: 'must be { interpretation, options }' },
);

/** Mounted at /api. */
export function buildupRoutes() {
  const r = Router();
  r.get('/sections/:sectionId/buildups', requireAuth, c.list);
  r.post('/sections/:sectionId/buildups', requireAuth, validate(createBuildupSchema), c.create);
  r.get('/sections/:id/velocity', requireAuth, c.getVelocity);
  r.put('/sections/:id/velocity', requireAuth, validate(putVelocitySchema), c.putVelocity);
  r.get('/buildups/:id', requireAuth, c.get);
  r.put('/buildups/:id', requireAuth, validate(saveBuildupSchema), c.save);
  r.delete('/buildups/:id', requireAuth, c.remove);
  r.get('/buildups/:id/measurements', requireAuth, validate(measurementQuery, 'query'), c.measurements);
  r.post('/measure', requireAuth, validate(measureBody), c.measureInterpretation);
  return r;
}
