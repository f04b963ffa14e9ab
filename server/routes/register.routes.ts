import { Router } from 'express';
import { preferencesSchema, registerExportQuerySchema, registerQuerySchema } from '../../shared/schemas/register';
import { validate } from '../middlewares/validate';
import { requireAuth } from '../middlewares/auth';
import { requestReportSchema } from '../../shared/schemas/reports';
import * as c from '../controllers/register.controller';

/** The project buildup register, its exports, the batch of signed-off reports, and one's own display preferences. Mounted at /api. */
export function registerRoutes() {
  const r = Router();
  r.get('/projects/:id/buildups', requireAuth, validate(registerQuerySchema, 'query'), c.list);
  r.get('/projects/:id/buildups/export.csv', requireAuth, validate(registerExportQuerySchema, 'query'), c.exportCsv);
  r.get('/projects/:id/buildups/export.geojson', requireAuth, validate(registerExportQuerySchema, 'query'), c.exportGeoJson);
  r.post('/projects/:id/buildups/report-batch', requireAuth, validate(requestReportSchema), c.startBatch);
  r.get('/report-batches/:batchId', requireAuth, c.batchStatus);
  r.get('/report-batches/:batchId/file', requireAuth, c.batchFile);
  r.get('/me/preferences', requireAuth, c.getPreferences);
  r.put('/me/preferences', requireAuth, validate(preferencesSchema), c.putPreferences);
  return r;
}
