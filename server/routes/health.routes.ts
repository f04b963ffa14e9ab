import { Router } from 'express';
import * as c from '../controllers/health.controller';

/** Public health checks (no sign-in). Mounted at /api/health. */
export function healthRoutes() {
  const r = Router();
  r.get('/', c.legacy);
  r.get('/live', c.live);
  r.get('/ready', c.ready);
  return r;
}
