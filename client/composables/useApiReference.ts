import { useQuery } from '@tanstack/vue-query';
import { computed, type Ref } from 'vue';
import { fetchApiDocument, type ApiDocument, type ApiOperation, type JsonSchema } from '../api/openapi';

export interface OperationView {
  key: string;
  method: string;
  path: string;
  op: ApiOperation;
  signedIn: boolean;
  roles: string[];
}

export interface TagView {
  name: string;
  operations: OperationView[];
}

const METHOD_ORDER = ['get', 'post', 'put', 'patch', 'delete'];

/** The document grouped by tag, filtered by a free-text needle over method, path and operation id. */
export function groupOperations(doc: ApiDocument | undefined, needle: string): TagView[] {
  if (!doc) return [];
  const q = needle.trim().toLowerCase();
  const byTag = new Map<string, OperationView[]>();
  for (const [path, item] of Object.entries(doc.paths)) {
    for (const [method, op] of Object.entries(item)) {
      const view: OperationView = {
        key: `${method} ${path}`,
        method: method.toUpperCase(),
        path,
        op,
        signedIn: Boolean(op.security?.length),
        roles: op['x-cayline-roles'] ?? [],
      };
      if (q && !`${view.method} ${path} ${op.operationId}`.toLowerCase().includes(q)) continue;
      const tag = op.tags?.[0] ?? 'other';
      if (!byTag.has(tag)) byTag.set(tag, []);
      byTag.get(tag)!.push(view);
    }
  }
  return [...byTag.entries()]
    .sort(([a], [b]) => a.localeCompare(b))
    .map(([name, ops]) => ({
      name,
      operations: ops.sort((a, b) => (a.path === b.path ? METHOD_ORDER.indexOf(a.method.toLowerCase()) - METHOD_ORDER.indexOf(b.method.toLowerCase()) : a.path.localeCompare(b.path))),
    }));
}

/** One line per schema property: `name`, type text, constraints, required, nesting depth. */
export interface SchemaRow {
  name: string;
  depth: number;
  type: string;
  required: boolean;
  notes: string;
}

function resolve(schema: JsonSchema, doc?: ApiDocument): JsonSchema {
  if (schema.$ref && doc?.components?.schemas) {
    const name = schema.$ref.split('/').pop()!;
    return doc.components.schemas[name] ?? schema;
  }
  return schema;
}

/** A short type text: `string`, `integer`, `array of number`, `"a" | "b"`, `object`. */
export function typeText(s: JsonSchema, doc?: ApiDocument): string {
  const r = resolve(s, doc);
  if (r.enum) return r.enum.map((v) => JSON.stringify(v)).join(' | ');
  if (r.const !== undefined) return JSON.stringify(r.const);
  const alts = r.anyOf ?? r.oneOf;
  if (alts) return alts.map((a) => typeText(a, doc)).join(' | ');
  if (r.allOf) return r.allOf.map((a) => typeText(a, doc)).join(' & ');
  const t = Array.isArray(r.type) ? r.type.join(' | ') : r.type;
  if (t === 'array') {
    if (r.prefixItems) return `[${r.prefixItems.map((p) => typeText(p, doc)).join(', ')}]`;
    if (r.items && !Array.isArray(r.items)) return `array of ${typeText(r.items, doc)}`;
  }
  return t ?? 'any';
}

function notesOf(s: JsonSchema): string {
  const n: string[] = [];
  if (s.minLength !== undefined || s.maxLength !== undefined) n.push(`length ${s.minLength ?? 0}–${s.maxLength ?? '∞'}`);
  if (s.minimum !== undefined) n.push(`≥ ${s.minimum}`);
  if (s.exclusiveMinimum !== undefined) n.push(`> ${s.exclusiveMinimum}`);
  if (s.maximum !== undefined) n.push(`≤ ${s.maximum}`);
  if (s.exclusiveMaximum !== undefined) n.push(`< ${s.exclusiveMaximum}`);
  if (s.minItems !== undefined || s.maxItems !== undefined) n.push(`${s.minItems ?? 0}–${s.maxItems ?? '∞'} items`);
  if (s.format) n.push(s.format);
  if (s.pattern) n.push(`pattern ${s.pattern}`);
  if (s.default !== undefined) n.push(`default ${JSON.stringify(s.default)}`);
  if (s.description) n.push(s.description);
  return n.join(' · ');
}

/** Flatten an object schema into rows (nested objects and arrays of objects indented), at most `maxDepth` deep. */
export function schemaRows(schema: JsonSchema, doc?: ApiDocument, maxDepth = 4): SchemaRow[] {
  const rows: SchemaRow[] = [];
  const walk = (s: JsonSchema, depth: number) => {
    const r = resolve(s, doc);
    const obj = r.properties ? r : r.items && !Array.isArray(r.items) && resolve(r.items, doc).properties ? resolve(r.items, doc) : null;
    if (!obj?.properties || depth > maxDepth) return;
    for (const [name, child] of Object.entries(obj.properties)) {
      const c = resolve(child, doc);
      rows.push({ name, depth, type: typeText(c, doc), required: obj.required?.includes(name) ?? false, notes: notesOf(c) });
      walk(c, depth + 1);
    }
  };
  walk(schema, 0);
  return rows;
}

export function useApiReference(needle: Ref<string>) {
  const q = useQuery({ queryKey: ['openapi'], queryFn: fetchApiDocument, staleTime: 5 * 60_000 });
  const tags = computed(() => groupOperations(q.data.value, needle.value));
  const count = computed(() => tags.value.reduce((n, t) => n + t.operations.length, 0));
  return { ...q, tags, count };
}
