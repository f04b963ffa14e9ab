/**
 * The depth view of a TWT section, mounted at /api. The build number and the
 * tile name are parsed as integers (`<x>_<y>.jpg`), so no client string
 * reaches a file path.
 */
import { Router } from 'express';
import { z } from 'zod';
import { requireAuth } from '../middlewares/auth';
import { validate } from '../middlewares/validate';
import * as c from '../controllers/depth-view.controller';

const build = z.coerce.number({ error: 'must be a positive whole number' }).int('must be a positive whole number').positive('must be a positive whole number').max(2 ** 31 - 1, 'is too large');
const buildParams = z.object({ id: z.string(), build });
const tileParams = z
  .object({
    id: z.string(),
    build,
    z: z.string().regex(/^\d{1,2}$/, 'must be a level number').transform(Number),
    tile: z.string().regex(/^\d{1,6}_\d{1,6}\.jpg$/, 'must be <x>_<y>.jpg'),
  })
  .transform(({ build: b, z: level, tile }) => {
    const [x, y] = tile.slice(0, -4).split('_').map(Number);
    return { build: b, z: level, x, y };
  });

export function depthViewRoutes() {
  const r = Router();
  r.get('/sections/:id/depth', requireAuth, c.get);
  r.post('/sections/:id/depth', requireAuth, c.request);
  r.get('/sections/:id/depth/:build/tiles/:z/:tile', requireAuth, validate(tileParams, 'params'), c.tile);
  r.get('/sections/:id/depth/:build/preview', requireAuth, validate(buildParams, 'params'), c.preview);
  return r;
}
