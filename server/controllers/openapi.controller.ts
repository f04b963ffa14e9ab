import fs from 'node:fs';
import path from 'node:path';
import type { Application, RequestHandler } from 'express';
import { ROOT_DIR } from '../config';
import { buildOpenApiDocument, type OpenApiDocument } from '../openapi/document';

const built = new WeakMap<Application, OpenApiDocument>();
let version: string | null = null;

/** The OpenAPI 3.1 document of every route, built once per app on first request (every route is mounted by then). */
export const document: RequestHandler = (req, res) => {
  version ??= (JSON.parse(fs.readFileSync(path.join(ROOT_DIR, 'package.json'), 'utf8')) as { version: string }).version;
  let doc = built.get(req.app);
  if (!doc) {
    doc = buildOpenApiDocument(req.app, version);
    built.set(req.app, doc);
  }
  res.set('Cache-Control', 'private, max-age=300').json(doc);
};
