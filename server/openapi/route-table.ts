/**
 * The app's route table, read from Express 5's own router: nested routers are
 * walked through `handle.stack`, mount paths come from each layer's
 * `rawPath`. Each route comes with the handlers that run for it — the plain
 * `use()` middlewares registered before it in every enclosing router, then
 * its own chain — so callers can ask which `validate()` schema, `requireAuth`
 * or `requireRole()` it has. The authorization matrix
 * (tests/api/authz-matrix.test.ts) and the OpenAPI document both use it.
 */

interface RouterLayer {
  route?: { path: unknown; methods: Record<string, boolean>; stack: { handle: unknown; method?: string }[] };
  handle?: { stack?: RouterLayer[] } | ((...args: unknown[]) => unknown);
  rawPath?: unknown;
}

export interface RouteEntry {
  method: string;
  /** Express path with `:params`, mount paths joined, e.g. `/api/projects/:id/members`. */
  path: string;
  /** Every handler that runs for it, in order (router-level middlewares, then the route's chain). */
  handlers: unknown[];
}

const join = (a: string, b: string) => `${a}/${b}`.replace(/\/+/g, '/').replace(/(.)\/$/, '$1');

/** Every `/api/…` route with a string path, sorted by path then method. */
export function routeEntries(app: object): RouteEntry[] {
  const out: RouteEntry[] = [];
  const seen = new Set<string>();
  const walk = (stack: RouterLayer[], prefix: string, inherited: unknown[]) => {
    const before = [...inherited];
    for (const layer of stack) {
      if (layer.route) {
        const paths = Array.isArray(layer.route.path) ? layer.route.path : [layer.route.path];
        for (const p of paths) {
          if (typeof p !== 'string') continue; // the client's catch-all regexp, outside /api
          for (const m of Object.keys(layer.route.methods)) {
            if (m === '_all') continue;
            const method = m.toUpperCase();
            const handlers = [...before, ...layer.route.stack.filter((l) => !l.method || l.method === m).map((l) => l.handle)];
            const key = `${method} ${join(prefix, p)}`;
            if (!seen.has(key)) out.push({ method, path: join(prefix, p), handlers });
            seen.add(key);
          }
        }
      } else if (layer.handle && typeof layer.handle === 'object' && layer.handle.stack) {
        walk(layer.handle.stack, join(prefix, typeof layer.rawPath === 'string' ? layer.rawPath : ''), before);
      } else if (typeof layer.handle === 'function' && 'stack' in layer.handle && Array.isArray((layer.handle as { stack?: unknown }).stack)) {
        // an Express Router is a function with a stack
        walk((layer.handle as unknown as { stack: RouterLayer[] }).stack, join(prefix, typeof layer.rawPath === 'string' ? layer.rawPath : ''), before);
      } else if (typeof layer.handle === 'function') {
        before.push(layer.handle); // a plain use() middleware runs for every later route here
      }
    }
  };
  walk((app as { router: { stack: RouterLayer[] } }).router.stack, '', []);
  return out
    .filter((r) => r.path.startsWith('/api/'))
    .sort((a, b) => (a.path === b.path ? a.method.localeCompare(b.method) : a.path.localeCompare(b.path)));
}

/** `METHOD /path` of every `/api/…` route (sorted). */
export function routeTable(app: object): string[] {
  return routeEntries(app)
    .map((r) => `${r.method} ${r.path}`)
    .sort();
}
