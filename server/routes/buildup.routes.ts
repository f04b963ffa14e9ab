import { Router } from 'express';
import { z } from 'zod';
import { createBuildupSchema, saveBuildupSchema } from '../../shared/schemas/buildups';
import { measureRequestSchema } from '../../shared/schemas/measure-limits';
import { validate } from '../middlewares/validate';
import { requireAuth } from '../middlewares/auth';
import { jsonBody } from '../middlewares/body';
import * as c from '../controllers/buildup.controller';

/** Thresholds a reader may change when asking for a stored buildup's measurements. */
const measurementQuery = z.object({
  aggradingToleranceDeg: z.coerce.number().optional(),
  drownedMinTerminations: z.coerce.number().optional(),
  draws: z.coerce.number().optional(),
});

/** `{ interpretation, options }`, with the buildup cap of shared/schemas/measure-limits.ts. */
const measureBody = measureRequestSchema;

/** Mounted at /api. */
export function buildupRoutes() {
  const r = Router();
  r.get('/sections/:sectionId/buildups', requireAuth, c.list);
  r.post('/sections/:sectionId/buildups', requireAuth, validate(createBuildupSchema), c.create);
  r.get('/buildups/:id', requireAuth, c.get);
  r.put('/buildups/:id', requireAuth, jsonBody('large'), validate(saveBuildupSchema), c.save);
  r.delete('/buildups/:id', requireAuth, c.remove);
  r.get('/buildups/:id/measurements', requireAuth, validate(measurementQuery, 'query'), c.measurements);
  r.post('/measure', requireAuth, jsonBody('large'), validate(measureBody), c.measureInterpretation);
  return r;
}
