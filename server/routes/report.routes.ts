import { Router } from 'express';
import { exportParamsSchema, exportQuerySchema, reportQuerySchema, requestReportSchema } from '../../shared/schemas/reports';
import { validate } from '../middlewares/validate';
import { requireAuth } from '../middlewares/auth';
import * as c from '../controllers/report.controller';

/** Mounted at /api: a buildup's report, its exports and report jobs (any member may read and export). */
export function reportRoutes() {
  const r = Router();
  r.get('/buildups/:id/report', requireAuth, validate(reportQuerySchema, 'query'), c.report);
  r.post('/buildups/:id/report/pdf', requireAuth, validate(requestReportSchema), c.requestPdf);
  r.get('/buildups/:id/export/:format', requireAuth, validate(exportParamsSchema, 'params'), validate(exportQuerySchema, 'query'), c.exportFile);
  r.get('/reports/:id', requireAuth, c.status);
  return r;
}
