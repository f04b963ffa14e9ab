/**
 * SEG-Y uploads and a SEG-Y section's headers, amplitudes and rendering,
 * mounted at /api. The upload chains auth, the project-editor check, the
 * streaming multipart reader (middlewares/segy-upload.ts), then validation
 * of the text fields.
 */
import { Router } from 'express';
import type { Config } from '../config';
import { requireAuth } from '../middlewares/auth';
import { validate } from '../middlewares/validate';
import { uploadSegy } from '../middlewares/segy-upload';
import { amplitudeWindowQuerySchema, renderRequestSchema, segyExtractSchema, segyUploadSchema, traceHeaderPageSchema } from '../../shared/schemas/segy';
import * as c from '../controllers/segy.controller';

export function segyRoutes(config: Config) {
  const r = Router();
  r.post('/projects/:projectId/segy', requireAuth, c.requireProjectEditor, uploadSegy(config), validate(segyUploadSchema), c.upload);
  r.get('/projects/:projectId/segy', requireAuth, c.list);
  r.get('/segy-uploads/:id', requireAuth, c.get);
  r.delete('/segy-uploads/:id', requireAuth, c.remove);
  r.post('/segy-uploads/:id/sections', requireAuth, validate(segyExtractSchema), c.extract);
  r.get('/sections/:id/segy', requireAuth, c.headers);
  r.get('/sections/:id/segy/trace-headers', requireAuth, validate(traceHeaderPageSchema, 'query'), c.traceHeaders);
  r.get('/sections/:id/amplitudes', requireAuth, validate(amplitudeWindowQuerySchema, 'query'), c.amplitudes);
  r.post('/sections/:id/render', requireAuth, validate(renderRequestSchema), c.render);
  return r;
}
