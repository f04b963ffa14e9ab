/**
 * The OpenAPI 3.1 document of the whole API, generated from the app's route
 * table (route-table.ts) and the shared zod schemas
 * (@asteasolutions/zod-to-openapi):
 *
 * - every `/api/…` route is one operation, tagged by the first path segment
 *   after `/api`;
 * - path, query and body schemas come from the route's `validate()` handlers
 *   (server/middlewares/validate.ts); path parameters without a schema are
 *   plain strings; a multipart parser marked with `multipartBody()`
 *   (marks.ts) makes the body `multipart/form-data`: its file field plus the
 *   text fields the route validates;
 * - `requireAuth` anywhere in the chain means bearer-token security and a 401
 *   answer; `requireRole(...)` adds a 403 and `x-cayline-roles`;
 * - every operation answers the one error shape `{ code, message, details? }`
 *   (server/middlewares/errors.ts) for 4XX/5XX; success bodies are not typed
 *   here (the shared types are TypeScript interfaces, not zod schemas).
 *
 * A schema the generator cannot express (a zod type it does not know) falls
 * back to zod's own JSON Schema output for that schema, so no route is left out.
 */
import { z, type ZodType } from 'zod';
import { OpenAPIRegistry, OpenApiGeneratorV31, extendZodWithOpenApi, type RouteConfig } from '@asteasolutions/zod-to-openapi';
import { routeEntries, type RouteEntry } from './route-table';
import { validatedBy } from '../middlewares/validate';
import { REQUIRED_ROLES, requireAuth } from '../middlewares/auth';
import { multipartOf } from './marks';

extendZodWithOpenApi(z);

type Method = RouteConfig['method'];

/** The error body every failing request gets (server/middlewares/errors.ts). */
export const apiErrorSchema = z
  .object({
    code: z.string().meta({ description: 'Machine-readable reason, e.g. validation_failed, not_found, unauthorized' }),
    message: z.string().meta({ description: 'What went wrong, naming each bad field by its path' }),
    details: z.unknown().optional().meta({ description: 'For validation errors: [{ path, message }] per bad field' }),
  })
  .meta({ id: 'ApiError' });

/** `/api/projects/:id/members/:userId` → `/api/projects/{id}/members/{userId}`. */
export function openApiPath(expressPath: string): string {
  return expressPath.replace(/:([A-Za-z0-9_]+)/g, '{$1}');
}

const paramNames = (expressPath: string) => [...expressPath.matchAll(/:([A-Za-z0-9_]+)/g)].map((m) => m[1]);

/** The tag of a route: the first path segment after /api without any extension (`projects`, `sections`, `health`, `openapi`…). */
export function tagOf(expressPath: string): string {
  return (expressPath.split('/')[2] ?? 'api').replace(/\..*$/, '');
}

function roles(handlers: unknown[]): string[] | null {
  for (const h of handlers) if (typeof h === 'function' && REQUIRED_ROLES in h) return (h as unknown as Record<symbol, string[]>)[REQUIRED_ROLES];
  return null;
}

let fallbacks = 0;
/** How many schemas needed zod's own JSON Schema since the process started (for tests and curiosity). */
export const fallbackCount = () => fallbacks;

/** A schema zod-to-openapi can render, or zod's own JSON Schema of it wrapped so the generator passes it through. */
function renderable(schema: ZodType): ZodType {
  try {
    const probe = new OpenAPIRegistry();
    probe.registerPath({ method: 'post', path: '/probe', request: { body: { content: { 'application/json': { schema } } } }, responses: {} });
    new OpenApiGeneratorV31(probe.definitions).generateDocument({ openapi: '3.1.0', info: { title: 'probe', version: '0' } });
    return schema;
  } catch {
    fallbacks++;
    const json = z.toJSONSchema(schema, { io: 'input', unrepresentable: 'any' }) as Record<string, unknown>;
    delete json.$schema;
    return z.unknown().openapi(json as never);
  }
}

/** A query/path schema as a ZodObject (the generator takes parameters only from objects). */
function asObject(schema: ZodType): z.ZodObject | null {
  let s: ZodType = schema;
  // unwrap pipes/effects to find the object underneath
  for (let i = 0; i < 5 && !(s instanceof z.ZodObject); i++) {
    const def = (s as unknown as { _zod?: { def?: { in?: ZodType; innerType?: ZodType; schema?: ZodType } } })._zod?.def;
    const next = def?.in ?? def?.innerType ?? def?.schema;
    if (!next) break;
    s = next;
  }
  return s instanceof z.ZodObject ? s : null;
}

function operation(route: RouteEntry, usedIds: Set<string>): RouteConfig {
  const validated = route.handlers.map(validatedBy).filter((v) => v !== null);
  const body = validated.find((v) => v.where === 'body');
  const query = validated.find((v) => v.where === 'query');
  const params = validated.find((v) => v.where === 'params');
  const authed = route.handlers.includes(requireAuth);
  const allowed = roles(route.handlers);

  const names = paramNames(route.path);
  const paramsObject = params ? asObject(params.schema) : null;
  const pathParams = z.object(
    Object.fromEntries(names.map((n) => [n, paramsObject?.shape[n] ? renderable(paramsObject.shape[n] as ZodType) : z.string()])),
  );
  const queryObject = query ? asObject(query.schema) : null;

  const request: RouteConfig['request'] = {};
  if (names.length) request.params = pathParams;
  if (queryObject) request.query = z.object(Object.fromEntries(Object.entries(queryObject.shape).map(([k, v]) => [k, renderable(v as ZodType)])));
  const multipart = route.handlers.map(multipartOf).find((m) => m !== null);
  if (multipart) {
    // a file plus text fields; the text fields are what the route's validate() checks after the parser
    const fields = body ? asObject(body.schema) : null;
    const shape = Object.fromEntries(Object.entries(fields?.shape ?? {}).map(([k, v]) => [k, renderable(v as ZodType)]));
    const file = z.string().meta({ format: 'binary', description: multipart.description });
    request.body = { required: true, content: { 'multipart/form-data': { schema: z.object({ [multipart.fileField]: file, ...shape }) } } };
  } else if (body) request.body = { required: true, content: { 'application/json': { schema: renderable(body.schema) } } };

  const error = (description: string) => ({ description, content: { 'application/json': { schema: apiErrorSchema } } });
  const responses: RouteConfig['responses'] = { '2XX': { description: 'Success' } };
  if (validated.length || names.length) responses['400'] = error('Validation failed: `details` names each bad field by its path');
  if (authed) responses['401'] = error('Not signed in (token missing, expired or signed out)');
  if (allowed) responses['403'] = error(`Only ${allowed.join(' or ')} accounts`);
  responses.default = error('Any other failure, in the one error shape');

  const controller = route.handlers.at(-1) as { name?: string } | undefined;
  const tag = tagOf(route.path);
  let id = `${tag}.${controller?.name && !/^(anonymous|handler|bound )?$/.test(controller.name) ? controller.name : route.method.toLowerCase()}`;
  if (usedIds.has(id)) id = `${id}_${route.method.toLowerCase()}_${route.path.split('/').slice(3).filter(Boolean).map((s) => s.replace(/^:/, 'by_')).join('_')}`;
  usedIds.add(id);

  const extra: Record<string, unknown> = {};
  if (allowed) extra['x-cayline-roles'] = allowed;
  if (query && !queryObject) extra['x-cayline-query'] = z.toJSONSchema(query.schema, { io: 'input', unrepresentable: 'any' });
  return {
    method: route.method.toLowerCase() as Method,
    path: openApiPath(route.path),
    operationId: id,
    summary: `${route.method} ${route.path}`,
    tags: [tag],
    ...(authed ? { security: [{ bearerAuth: [] }] } : {}),
    request,
    responses,
    ...extra,
  };
}

export interface OpenApiDocument {
  openapi: string;
  info: Record<string, unknown>;
  paths: Record<string, Record<string, Record<string, unknown>>>;
  components?: Record<string, unknown>;
  tags?: { name: string; description?: string }[];
  [k: string]: unknown;
}

/** The OpenAPI 3.1 document of every /api route of `app`. */
export function buildOpenApiDocument(app: object, version = '0.1.0'): OpenApiDocument {
  const registry = new OpenAPIRegistry();
  registry.registerComponent('securitySchemes', 'bearerAuth', { type: 'http', scheme: 'bearer', bearerFormat: 'JWT' });
  registry.register('ApiError', apiErrorSchema);
  const usedIds = new Set<string>();
  const routes = routeEntries(app);
  for (const r of routes) registry.registerPath(operation(r, usedIds));
  const tags = [...new Set(routes.map((r) => tagOf(r.path)))].sort().map((name) => ({ name }));
  const doc = new OpenApiGeneratorV31(registry.definitions).generateDocument({
    openapi: '3.1.0',
    info: {
      title: 'Cayline API',
      version,
      description: 'Every route of the Cayline server. Errors always answer `{ code, message, details? }`; sign in with POST /api/auth/login and send the token as `Authorization: Bearer <token>`.',
    },
    servers: [{ url: '/' }],
    tags,
  }) as unknown as OpenApiDocument;
  // a path parameter is always required (OAS 3.1 §4.8.12.2), also when its schema came through the fallback
  for (const item of Object.values(doc.paths)) {
    for (const op of Object.values(item)) {
      for (const p of (op.parameters ?? []) as { in: string; required?: boolean }[]) if (p.in === 'path') p.required = true;
    }
  }
  return doc;
}
