import { Router } from 'express';
import { requireAuth } from '../middlewares/auth';
import * as c from '../controllers/openapi.controller';

/** The API's own description (server/openapi/). Mounted at /api. */
export function openApiRoutes() {
  const r = Router();
  r.get('/openapi.json', requireAuth, c.document);
  return r;
}
