/**
 * The OpenAPI 3.1 document at /api/openapi.json: valid against the OAS 3.1
 * schema (checked by @readme/openapi-parser, which validates against the
 * official OpenAPI JSON Schemas), exactly the app's route table, request
 * schemas taken from the routes' own zod schemas, the one error shape.
 */
import request from 'supertest';
import { validate as validateOpenApi } from '@readme/openapi-parser';
import { z } from 'zod';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { bearer, createTestApp, type TestApp } from '../helpers/app';
import { routeEntries, routeTable } from '../../server/openapi/route-table';
import { validatedBy } from '../../server/middlewares/validate';
import { requireAuth } from '../../server/middlewares/auth';
import { createProjectSchema } from '../../shared/schemas/projects';

type Op = {
  operationId: string;
  tags: string[];
  security?: unknown[];
  parameters?: { name: string; in: string; required: boolean; schema: Record<string, unknown> }[];
  requestBody?: { content: Record<string, { schema: Record<string, unknown> }> };
  responses: Record<string, { content?: Record<string, { schema: { $ref?: string } }> }>;
  'x-cayline-roles'?: string[];
};
type Doc = { openapi: string; paths: Record<string, Record<string, Op>>; components: { schemas: Record<string, { required?: string[] }> } };

let t: TestApp;
let doc: Doc;
beforeAll(async () => {
  t = await createTestApp();
  const r = await request(t.app).get('/api/openapi.json').set(bearer(await t.token('reviewer')));
  expect(r.status, JSON.stringify(r.body).slice(0, 300)).toBe(200);
  doc = r.body;
});
afterAll(async () => t?.close());

const ops = () => Object.entries(doc.paths).flatMap(([p, item]) => Object.entries(item).map(([m, op]) => ({ key: `${m.toUpperCase()} ${p.replace(/\{([^}]+)\}/g, ':$1')}`, op })));
const opOf = (method: string, expressPath: string) => doc.paths[expressPath.replace(/:([A-Za-z0-9_]+)/g, '{$1}')][method.toLowerCase()];

describe('OpenAPI document', () => {
  it('needs sign-in', async () => {
    const r = await request(t.app).get('/api/openapi.json');
    expect(r.status).toBe(401);
    expect(r.body.code).toBe('unauthorized');
  });

  it('is a valid OpenAPI 3.1 document', async () => {
    expect(doc.openapi).toBe('3.1.0');
    const result = await validateOpenApi(structuredClone(doc) as never);
    expect(result.valid, JSON.stringify(result).slice(0, 2000)).toBe(true);
    // the validator does refuse a broken document (a path parameter that is not required)
    const broken = structuredClone(doc);
    broken.paths['/api/projects/{id}'].get.parameters![0].required = false;
    expect((await validateOpenApi(broken as never)).valid).toBe(false);
  });

  it('lists exactly the routes of the route table the authorization matrix uses', () => {
    const table = routeTable(t.app);
    expect(table.length).toBeGreaterThan(50);
    expect(ops().map((o) => o.key).sort()).toEqual(table);
    expect(table).toContain('GET /api/openapi.json');
    expect(new Set(ops().map((o) => o.op.operationId)).size).toBe(ops().length); // unique ids
  });

  it('every route that validates its body, query or path with a zod schema carries that schema', () => {
    let bodies = 0;
    for (const r of routeEntries(t.app)) {
      const op = opOf(r.method, r.path);
      for (const v of r.handlers.map(validatedBy)) {
        if (!v) continue;
        if (v.where === 'body') {
          bodies++;
          const content = op.requestBody?.content ?? {};
          expect(content['application/json']?.schema ?? content['multipart/form-data']?.schema, `${r.method} ${r.path}`).toBeTruthy();
        } else {
          const shape = (v.schema as z.ZodObject).shape as Record<string, unknown> | undefined;
          if (!shape) continue;
          const names = (op.parameters ?? []).filter((p) => p.in === (v.where === 'query' ? 'query' : 'path')).map((p) => p.name);
          expect(names, `${r.method} ${r.path} ${v.where}`).toEqual(expect.arrayContaining(Object.keys(shape)));
        }
      }
      // path parameters are always named and required
      for (const name of [...r.path.matchAll(/:([A-Za-z0-9_]+)/g)].map((m) => m[1])) {
        expect(op.parameters?.find((p) => p.in === 'path' && p.name === name)?.required, `${r.method} ${r.path} :${name}`).toBe(true);
      }
    }
    expect(bodies).toBeGreaterThan(20);
  });

  it('a body schema is the zod schema rendered: POST /api/projects', () => {
    const schema = opOf('POST', '/api/projects').requestBody!.content['application/json'].schema as {
      properties: Record<string, { maxLength?: number; minLength?: number }>;
      required: string[];
    };
    expect(schema.required).toEqual(['name']);
    // the same limits as the zod schema itself (zod's own JSON Schema output as the second opinion)
    const own = z.toJSONSchema(createProjectSchema, { io: 'input' }) as { properties: Record<string, { maxLength?: number; minLength?: number }> };
    expect(schema.properties.name.maxLength).toBe(own.properties.name.maxLength);
    expect(schema.properties.name.minLength).toBe(own.properties.name.minLength);
    expect(opOf('POST', '/api/projects')['x-cayline-roles']).toEqual(['admin', 'interpreter']);
    expect(Object.keys(opOf('POST', '/api/projects').responses)).toContain('403');
  });

  it('uploads are multipart/form-data: the file field plus the validated text fields', () => {
    const upload = opOf('POST', '/api/projects/:projectId/sections').requestBody!.content;
    expect(Object.keys(upload)).toEqual(['multipart/form-data']);
    const schema = upload['multipart/form-data'].schema as { properties: Record<string, { type?: string; format?: string }>; required: string[] };
    expect(schema.properties.image).toMatchObject({ type: 'string', format: 'binary' });
    expect(schema.required).toContain('image');
    expect(Object.keys(schema.properties).length).toBeGreaterThan(1); // the section's text fields (name, vertical domain…)
    for (const path of ['/api/analogues/import', '/api/analogues/import/preview']) {
      expect(Object.keys(opOf('POST', path).requestBody!.content), path).toEqual(['multipart/form-data']);
    }
    expect(Object.keys(opOf('POST', '/api/projects/:projectId/segy').requestBody!.content)).toEqual(['multipart/form-data']);
  });

  it('query parameters come from the query schema: GET /api/projects', () => {
    const params = opOf('GET', '/api/projects').parameters!;
    expect(params.map((p) => p.name).sort()).toEqual(['page', 'pageSize', 'q']);
    expect(params.find((p) => p.name === 'pageSize')!.schema).toMatchObject({ type: 'integer', maximum: 200 });
  });

  it('every operation answers the error shape {code, message, details}; signed-in routes need the bearer token', () => {
    expect(doc.components.schemas.ApiError.required).toEqual(['code', 'message']);
    const byKey = new Map(routeEntries(t.app).map((r) => [`${r.method} ${r.path}`, r]));
    for (const { key, op } of ops()) {
      expect(op.responses.default?.content?.['application/json'].schema.$ref, key).toBe('#/components/schemas/ApiError');
      const authed = byKey.get(key)!.handlers.includes(requireAuth);
      expect(Boolean(op.security?.length), key).toBe(authed);
      if (authed) expect(op.responses['401'], key).toBeTruthy();
    }
    expect(opOf('POST', '/api/auth/login').security).toBeUndefined();
    expect(opOf('GET', '/api/health/ready').security).toBeUndefined();
  });
});
