import { apiFetch } from './http';

/** A JSON Schema as the OpenAPI 3.1 document carries it (only the parts the reference page shows). */
export interface JsonSchema {
  type?: string | string[];
  properties?: Record<string, JsonSchema>;
  required?: string[];
  items?: JsonSchema | JsonSchema[];
  prefixItems?: JsonSchema[];
  enum?: unknown[];
  const?: unknown;
  anyOf?: JsonSchema[];
  oneOf?: JsonSchema[];
  allOf?: JsonSchema[];
  $ref?: string;
  minimum?: number;
  maximum?: number;
  exclusiveMinimum?: number;
  exclusiveMaximum?: number;
  minLength?: number;
  maxLength?: number;
  minItems?: number;
  maxItems?: number;
  pattern?: string;
  format?: string;
  default?: unknown;
  description?: string;
  additionalProperties?: boolean | JsonSchema;
}

export interface ApiParameter {
  name: string;
  in: 'path' | 'query' | 'header' | 'cookie';
  required?: boolean;
  schema?: JsonSchema;
}

export interface ApiOperation {
  operationId: string;
  summary?: string;
  tags?: string[];
  security?: Record<string, string[]>[];
  parameters?: ApiParameter[];
  requestBody?: { content: Record<string, { schema: JsonSchema }> };
  responses: Record<string, { description: string; content?: Record<string, { schema: JsonSchema }> }>;
  'x-cayline-roles'?: string[];
}

export interface ApiDocument {
  openapi: string;
  info: { title: string; version: string; description?: string };
  tags?: { name: string }[];
  paths: Record<string, Record<string, ApiOperation>>;
  components?: { schemas?: Record<string, JsonSchema> };
}

/** GET /api/openapi.json — the OpenAPI 3.1 document of every route. */
export function fetchApiDocument(): Promise<ApiDocument> {
  return apiFetch<ApiDocument>('/openapi.json');
}
