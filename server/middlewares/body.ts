/**
 * JSON request bodies, with a limit per route and never read before the
 * sign-in check on the routes that take large ones.
 *
 * - `/api` has one small default parser (`JSON_MAX_BYTES`, 1 MB) placed before
 *   the routes (`defaultJsonBody`). It skips the routes that parse their own
 *   body, which it finds in the app's route table (a route whose chain holds a
 *   `jsonBody(...)` handler), so those bodies stay unread until the route's
 *   own chain gets to them.
 * - `jsonBody('large')` (`JSON_LARGE_MAX_BYTES`, 20 MB: saving a buildup,
 *   `POST /api/measure`) goes after `requireAuth` in the route chain, so an
 *   anonymous request is answered 401 without its body being read into memory
 *   (Node discards the unread rest after the answer).
 * - `jsonBody('signIn')` (16 KB) serves `POST /api/auth/login`.
 *
 * A declared `Content-Length` over the limit is refused at once (413, before
 * reading); a chunked body is cut off at the limit. The 413 names the limit.
 */
import express, { type RequestHandler } from 'express';
import type { Config } from '../config';
import { ctx } from '../context';
import { AppError } from '../errors';

export type BodyKind = 'default' | 'large' | 'signIn';

const OWN_BODY = Symbol('cayline.ownJsonBody');

/** The limit in bytes of a kind of body, from the configuration. */
export function bodyLimit(kind: BodyKind, config: Config): number {
  const b = config.body;
  return kind === 'large' ? b.largeJsonMaxBytes : kind === 'signIn' ? b.signInMaxBytes : b.jsonMaxBytes;
}

/** "1 MB", "16 KB", "1.5 MB", "900 bytes" (binary multiples, as the limits are set). */
export function bytesText(n: number): string {
  const KB = 1024;
  const MB = KB * KB;
  const fmt = (v: number) => String(Math.round(v * 10) / 10);
  if (n >= MB) return `${fmt(n / MB)} MB`;
  if (n >= KB) return `${fmt(n / KB)} KB`;
  return `${n} bytes`;
}

export function tooLarge(limit: number): AppError {
  const message = `The request body is larger than the limit of ${bytesText(limit)} for this route`;
  return new AppError(413, 'too_large', message, [{ path: '', message: `larger than ${bytesText(limit)}` }]);
}

const parsers = new Map<number, RequestHandler>();

/** Parse a JSON body with `limit` bytes: refuse a larger declared length before reading, and name the limit on overflow. */
function parseJson(limit: number): RequestHandler {
  let parse = parsers.get(limit);
  if (!parse) {
    parse = express.json({ limit });
    parsers.set(limit, parse);
  }
  const p = parse;
  return (req, res, next) => {
    const declared = Number(req.headers['content-length']);
    const identity = !req.headers['content-encoding'] || req.headers['content-encoding'] === 'identity';
    if (identity && Number.isFinite(declared) && declared > limit && req.is('application/json')) return next(tooLarge(limit));
    p(req, res, (err?: unknown) => {
      if (err && (err as { type?: string }).type === 'entity.too.large') return next(tooLarge(limit));
      next(err as Error | undefined);
    });
  };
}

/**
 * A route's own JSON parser (`'large'` or `'signIn'` limit). Put it after
 * `requireAuth` so anonymous bodies are never read; the default /api parser
 * leaves these routes alone.
 */
export function jsonBody(kind: Exclude<BodyKind, 'default'>): RequestHandler {
  const handler: RequestHandler = (req, res, next) => parseJson(bodyLimit(kind, ctx().config))(req, res, next);
  Object.defineProperty(handler, OWN_BODY, { value: kind });
  Object.defineProperty(handler, 'name', { value: `jsonBody_${kind}` });
  return handler;
}

// ---- the app's route table -------------------------------------------------

interface RouterLayer {
  route?: { path: unknown; methods: Record<string, boolean>; stack: { handle: unknown }[] };
  handle?: { stack?: RouterLayer[] };
  rawPath?: unknown;
}

export interface OwnBodyRoute {
  method: string;
  path: string;
  kind: BodyKind;
  /** Names of the handlers before the parser in the route's own chain (for checks that requireAuth comes first). */
  before: string[];
}

const joinPath = (a: string, b: string) => `${a}/${b}`.replace(/\/+/g, '/').replace(/(.)\/$/, '$1');

/** Every route whose chain holds a `jsonBody(...)` handler, with its full path (mount paths joined). */
export function ownBodyRoutes(expressApp: object): OwnBodyRoute[] {
  const app = expressApp as { router: { stack: RouterLayer[] } };
  const out: OwnBodyRoute[] = [];
  const walk = (stack: RouterLayer[], prefix: string) => {
    for (const layer of stack) {
      if (layer.route) {
        const at = layer.route.stack.findIndex((l) => typeof l.handle === 'function' && OWN_BODY in (l.handle as object));
        if (at < 0) continue;
        const kind = (layer.route.stack[at].handle as Record<symbol, BodyKind>)[OWN_BODY];
        const before = layer.route.stack.slice(0, at).map((l) => (l.handle as { name?: string }).name ?? '');
        const paths = Array.isArray(layer.route.path) ? layer.route.path : [layer.route.path];
        for (const p of paths) {
          if (typeof p !== 'string') throw new Error('jsonBody() on a route with a non-string path: the default parser cannot tell it apart');
          for (const m of Object.keys(layer.route.methods)) out.push({ method: m === '_all' ? '*' : m.toUpperCase(), path: joinPath(prefix, p), kind, before });
        }
      } else if (layer.handle?.stack) {
        walk(layer.handle.stack, joinPath(prefix, typeof layer.rawPath === 'string' ? layer.rawPath : ''));
      }
    }
  };
  walk(app.router.stack, '');
  return out;
}

/** A route path (`/api/buildups/:id`) as Express matches it by default: case-insensitive, optional trailing slash. */
function pathRegExp(path: string): RegExp {
  if (/[{}()*?+]/.test(path)) throw new Error(`jsonBody() route ${path}: only plain paths with :params are supported`);
  const body = path
    .split('/')
    .map((seg) => (seg.startsWith(':') ? '[^/]+' : seg.replace(/[.\\^$|[\]]/g, '\\$&')))
    .join('/');
  return new RegExp(`^${body}/?$`, 'i');
}

/**
 * The small default JSON parser for /api. The routes that parse their own
 * body are read from the app's route table on the first request (all routes
 * are mounted by then) and skipped.
 */
export function defaultJsonBody(app: object, config: Config): RequestHandler {
  let own: { method: string; re: RegExp }[] | null = null;
  const parse = parseJson(bodyLimit('default', config));
  return (req, res, next) => {
    own ??= ownBodyRoutes(app).map((r) => ({ method: r.method, re: pathRegExp(r.path) }));
    const path = req.originalUrl.split('?')[0];
    if (own.some((r) => (r.method === '*' || r.method === req.method) && r.re.test(path))) return next();
    parse(req, res, next);
  };
}
