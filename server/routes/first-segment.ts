/**
 * Routers that share the `/api` mount are entered only for requests whose
 * first path segment one of their routes starts with. Express otherwise tries
 * every route of every router mounted before the one that answers (about 40
 * path matches for a library search), a measurable share of each request.
 *
 * The segments are read from the router's own route table when it is
 * mounted, so adding a route needs nothing here. A router is always entered
 * (no shortcut) when one of its routes starts with a parameter or is not a
 * plain string path, or when it has router-level middleware (`r.use`), which
 * may answer requests for paths no route of it matches. Matching follows
 * Express's defaults: case-insensitive, the path as sent (not decoded).
 * The route table walkers (server/openapi/route-table.ts, middlewares/body.ts)
 * see the router through `stack`.
 */
import type { RequestHandler, Router } from 'express';

interface Layer {
  route?: { path: unknown };
}

/** The lower-cased first segments of a router's routes, or null when the router must always be entered. */
export function firstSegments(router: Router): Set<string> | null {
  const out = new Set<string>();
  for (const layer of (router as unknown as { stack: Layer[] }).stack) {
    if (!layer.route) return null;
    const paths = Array.isArray(layer.route.path) ? layer.route.path : [layer.route.path];
    for (const p of paths) {
      if (typeof p !== 'string' || !p.startsWith('/')) return null;
      const seg = p.slice(1).split('/')[0];
      if (!seg || /[:*{}()?+\\]/.test(seg)) return null;
      out.add(seg.toLowerCase());
    }
  }
  return out;
}

/** The lower-cased first segment of a request URL relative to the mount (`/analogues/12?x=1` → `analogues`), read without parsing the URL. */
export function firstSegmentOf(url: string): string {
  let end = 1;
  while (end < url.length) {
    const c = url.charCodeAt(end);
    if (c === 47 /* / */ || c === 63 /* ? */ || c === 35 /* # */) break;
    end++;
  }
  return url.slice(1, end).toLowerCase();
}

/** The router behind a guard that skips it for requests none of its routes can match. */
export function byFirstSegment(router: Router): RequestHandler {
  const segs = firstSegments(router);
  if (!segs) return router;
  const guard: RequestHandler = (req, res, next) => {
    const seg = firstSegmentOf(req.url);
    if (!segs.has(seg)) return next();
    router(req, res, next);
  };
  Object.defineProperty(guard, 'stack', { get: () => (router as unknown as { stack: unknown }).stack });
  Object.defineProperty(guard, 'name', { value: 'router' });
  return guard;
}
