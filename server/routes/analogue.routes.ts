import { Router } from 'express';
import { z } from 'zod';
import { analogueUpdateSchema, declineSchema, handEntrySchema, listItemSchema, lookAlikesSchema, promoteSchema, savedSearchSchema } from '../../shared/schemas/analogues';
import { validate } from '../middlewares/validate';
import { requireAuth, requireRole } from '../middlewares/auth';
import * as c from '../controllers/analogue.controller';

const curator = requireRole('curator', 'admin');
const noBody = z.object({}).strict();

/** Analogue library, mounted at /api (route list in shared/schemas/analogues.ts). */
export function analogueRoutes() {
  const r = Router();
  r.get('/analogues', requireAuth, c.search);
  r.get('/analogues/export.csv', requireAuth, c.exportCsv);
  r.get('/analogues/export.geojson', requireAuth, c.exportGeoJson);
  r.get('/analogues/ics-chart', requireAuth, c.icsChart);
  r.get('/analogues/lists', requireAuth, c.lists);
  r.post('/analogues/lists/:list', requireAuth, curator, validate(listItemSchema), c.addListItem);
  r.delete('/analogues/lists/:list/:value', requireAuth, curator, c.removeListItem);
  r.get('/analogues/saved-searches', requireAuth, c.savedSearches);
  r.post('/analogues/saved-searches', requireAuth, validate(savedSearchSchema), c.saveSearch);
  r.delete('/analogues/saved-searches/:id', requireAuth, c.deleteSavedSearch);
  r.post('/analogues/look-alikes', requireAuth, validate(lookAlikesSchema), c.lookAlikes);
  r.post('/analogues/import/preview', requireAuth, curator, c.csvUpload, c.importPreview);
  r.post('/analogues/import', requireAuth, curator, c.csvUpload, c.importRun);
  r.post('/analogues', requireAuth, curator, validate(handEntrySchema), c.create);
  r.get('/analogues/:id', requireAuth, c.get);
  r.get('/analogues/:id/crop', requireAuth, c.crop);
  r.patch('/analogues/:id', requireAuth, curator, validate(analogueUpdateSchema), c.update);
  r.delete('/analogues/:id', requireAuth, curator, c.remove);
  r.post('/analogues/:id/accept', requireAuth, curator, validate(noBody), c.accept);
  r.post('/analogues/:id/decline', requireAuth, curator, validate(declineSchema), c.decline);
  r.post('/buildups/:id/promote', requireAuth, requireRole('curator', 'admin', 'interpreter'), validate(promoteSchema), c.promote);
  return r;
}
