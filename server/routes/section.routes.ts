/**
 * Section routes, mounted at /api. Each chains auth → validate → controller
 * (uploads: auth, the project-editor check, the multipart parser, then
 * validation of the text fields). Path parameters are parsed as integers;
 * the tile name must be `<x>_<y>.jpg`, so no client string reaches a file path.
 */
import { Router } from 'express';
import { z } from 'zod';
import type { Config } from '../config';
import { requireAuth } from '../middlewares/auth';
import { validate } from '../middlewares/validate';
import { uploadSectionImage } from '../middlewares/upload';
import {
  calibrationInputSchema,
  createSectionSchema,
  listSectionsQuerySchema,
  updateSectionSchema,
} from '../../shared/schemas/sections';
import * as c from '../controllers/section.controller';

const positiveId = z.coerce.number({ error: 'must be a positive whole number' }).int('must be a positive whole number').positive('must be a positive whole number');
const projectParams = z.object({ projectId: positiveId });
const sectionParams = z.object({ id: positiveId });
const tileParams = z
  .object({
    id: positiveId,
    z: z.string().regex(/^\d{1,2}$/, 'must be a level number').transform(Number),
    tile: z.string().regex(/^\d{1,6}_\d{1,6}\.jpg$/, 'must be <x>_<y>.jpg'),
  })
  .transform(({ id, z: level, tile }) => {
    const [x, y] = tile.slice(0, -4).split('_').map(Number);
    return { id, z: level, x, y };
  });

export function sectionRoutes(config: Config) {
  const r = Router();
  const params = validate(sectionParams, 'params');
  r.get('/projects/:projectId/sections', requireAuth, validate(projectParams, 'params'), validate(listSectionsQuerySchema, 'query'), c.list);
  r.post(
    '/projects/:projectId/sections',
    requireAuth,
    validate(projectParams, 'params'),
    c.requireProjectEditor,
    uploadSectionImage(config),
    validate(createSectionSchema),
    c.upload,
  );
  r.get('/sections/:id', requireAuth, params, c.get);
  r.patch('/sections/:id', requireAuth, params, validate(updateSectionSchema), c.update);
  r.delete('/sections/:id', requireAuth, params, c.remove);
  r.post('/sections/:id/retry', requireAuth, params, c.retry);
  r.get('/sections/:id/tiles/:z/:tile', requireAuth, validate(tileParams, 'params'), c.tile);
  r.get('/sections/:id/thumbnail', requireAuth, params, c.thumbnail);
  r.get('/sections/:id/preview', requireAuth, params, c.preview);
  r.get('/sections/:id/calibrations', requireAuth, params, c.calibrations);
  r.put('/sections/:id/calibration', requireAuth, params, validate(calibrationInputSchema), c.saveCalibration);
  r.post('/sections/:id/calibration/preview', requireAuth, params, validate(calibrationInputSchema), c.previewCalibration);
  return r;
}
