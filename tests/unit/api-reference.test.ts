/** The API reference page's reading of an OpenAPI document (client/composables/useApiReference.ts). */
import { describe, expect, it } from 'vitest';
import { groupOperations, schemaRows, typeText } from '../../client/composables/useApiReference';
import type { ApiDocument } from '../../client/api/openapi';

const doc: ApiDocument = {
  openapi: '3.1.0',
  info: { title: 't', version: '0' },
  paths: {
    '/api/projects/{id}': {
      delete: { operationId: 'projects.remove', tags: ['projects'], security: [{ bearerAuth: [] }], responses: {} },
      get: { operationId: 'projects.get', tags: ['projects'], security: [{ bearerAuth: [] }], responses: {} },
    },
    '/api/projects': {
      post: { operationId: 'projects.create', tags: ['projects'], security: [{ bearerAuth: [] }], 'x-cayline-roles': ['admin'], responses: {} },
    },
    '/api/health/live': { get: { operationId: 'health.live', tags: ['health'], responses: {} } },
  },
  components: { schemas: { Tie: { type: 'object', properties: { px: { type: 'array', prefixItems: [{ type: 'number' }, { type: 'number' }] } }, required: ['px'] } } },
};

describe('API reference reading', () => {
  it('groups by tag (sorted), paths sorted, methods in GET, POST, PUT, PATCH, DELETE order', () => {
    const tags = groupOperations(doc, '');
    expect(tags.map((t) => t.name)).toEqual(['health', 'projects']);
    expect(tags[1].operations.map((o) => o.key)).toEqual(['post /api/projects', 'get /api/projects/{id}', 'delete /api/projects/{id}']);
    expect(tags[1].operations[0]).toMatchObject({ method: 'POST', signedIn: true, roles: ['admin'] });
    expect(tags[0].operations[0]).toMatchObject({ signedIn: false, roles: [] });
  });

  it('filters by method, path or operation id, case-insensitively', () => {
    expect(groupOperations(doc, 'DELETE').flatMap((t) => t.operations.map((o) => o.op.operationId))).toEqual(['projects.remove']);
    expect(groupOperations(doc, 'live').map((t) => t.name)).toEqual(['health']);
    expect(groupOperations(doc, 'projects.create')[0].operations).toHaveLength(1);
    expect(groupOperations(doc, 'no such thing')).toEqual([]);
  });

  it('type texts: tuples, arrays, enums, unions and references', () => {
    expect(typeText({ type: 'array', prefixItems: [{ type: 'number' }, { type: 'number' }] })).toBe('[number, number]');
    expect(typeText({ type: 'array', items: { type: 'string' } })).toBe('array of string');
    expect(typeText({ type: 'string', enum: ['draft', 'signed_off'] })).toBe('"draft" | "signed_off"');
    expect(typeText({ anyOf: [{ type: 'number' }, { type: 'null' }] })).toBe('number | null');
    expect(typeText({ $ref: '#/components/schemas/Tie' }, doc)).toBe('object');
    expect(typeText({})).toBe('any');
  });

  it('schema rows: nested objects and arrays of objects indented, required marked, constraints noted', () => {
    const rows = schemaRows(
      {
        type: 'object',
        required: ['name', 'ties'],
        properties: {
          name: { type: 'string', minLength: 1, maxLength: 120 },
          ties: { type: 'array', minItems: 3, items: { $ref: '#/components/schemas/Tie' } },
          draws: { type: 'integer', minimum: 0, maximum: 5000, default: 0 },
        },
      },
      doc,
    );
    expect(rows).toEqual([
      { name: 'name', depth: 0, type: 'string', required: true, notes: 'length 1–120' },
      { name: 'ties', depth: 0, type: 'array of object', required: true, notes: '3–∞ items' },
      { name: 'px', depth: 1, type: '[number, number]', required: true, notes: '' },
      { name: 'draws', depth: 0, type: 'integer', required: false, notes: '≥ 0 · ≤ 5000 · default 0' },
    ]);
  });
});
