/**
 * Section routes, mounted at /api. Each chains auth → validate → controller
 * (uploads: auth, the project-editor check, the multipart parser, then
 * validation of the text fields). Row ids are read by the controller with
 * idParam (middlewares/params.ts); the tile name must be `<x>_<y>.jpg`, so no
 * client string reaches a file path. Calibrations: calibration.routes.ts.
 */
import { Router } from 'express';
import { z } from 'zod';
import type { Config } from '../config';
import { requireAuth } from '../middlewares/auth';
import { validate } from '../middlewares/validate';
import { uploadSectionImage } from '../middlewares/upload';
import {
  createSectionSchema,
  listSectionsQuerySchema,
  updateSectionSchema,
} from '../../shared/schemas/sections';
import { idParamSchema } from '../../shared/schemas/ids';
import * as c from '../controllers/section.controller';

const tileParams = z
  .object({
    id: idParamSchema,
    z: z.string().regex(/^\d{1,2}$/, 'must be a level number').transform(Number),
    tile: z.string().regex(/^\d{1,6}_\d{1,6}\.jpg$/, 'must be <x>_<y>.jpg'),
  })
  .transform(({ id, z: level, tile }) => {
    const [x, y] = tile.slice(0, -4).split('_').map(Number);
    return { id, z: level, x, y };
  });

export function sectionRoutes(config: Config) {
  const r = Router();
  r.get('/projects/:projectId/sections', requireAuth, validate(listSectionsQuerySchema, 'query'), c.list);
  r.post(
    '/projects/:projectId/sections',
    requireAuth,
    c.requireProjectEditor,
    uploadSectionImage(config),
    validate(createSectionSchema),
    c.upload,
  );
  r.get('/sections/:id', requireAuth, c.get);
  r.patch('/sections/:id', requireAuth, validate(updateSectionSchema), c.update);
  r.delete('/sections/:id', requireAuth, c.remove);
  r.post('/sections/:id/retry', requireAuth, c.retry);
  r.get('/sections/:id/tiles/:z/:tile', requireAuth, validate(tileParams, 'params'), c.tile);
  r.get('/sections/:id/thumbnail', requireAuth, c.thumbnail);
  r.get('/sections/:id/preview', requireAuth, c.preview);
  return r;
}
