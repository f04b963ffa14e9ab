import type { Request, Response, RequestHandler } from 'express';
import { pipeline } from 'node:stream/promises';
import multer, { MulterError } from 'multer';
import pLimit from 'p-limit';
import { LRUCache } from 'lru-cache';
import * as a from '../services/analogue.service';
import * as io from '../services/analogue-import.service';
import { idParam } from '../middlewares/params';
import { AppError, validationError } from '../errors';
import { analogueSearchSchema, importMappingSchema, IMPORT_MAX_BYTES, listNameSchema, searchQueryFromUrl, type AnalogueSearchQuery, type ListName } from '../../shared/schemas/analogues';
import { multipartBody } from '../openapi/marks';

function listParam(req: Request): ListName {
  const r = listNameSchema.safeParse(req.params.list);
  if (!r.success) throw new AppError(404, 'not_found', `List not found (one of setting, factory, climate)`);
  return r.data;
}

/**
 * Searches parsed a moment ago, by their query string exactly as sent: a
 * repeated search (a shared link, a page polled, the list and the map asking
 * alike) is not parsed and validated again. Only valid ones are kept; the
 * parsed query is frozen, as every request that meets it shares it.
 */
const parsedSearches = new LRUCache<string, AnalogueSearchQuery>({ max: 1000 });
/** Searches parsed from their query string (not taken from `parsedSearches`), for tests. */
export const searchParseStats = { parsed: 0 };

/** Parse the URL form of a search (arrays as comma lists, r.<field>=min..max). */
function searchQuery(req: Request): AnalogueSearchQuery {
  const at = req.originalUrl.indexOf('?');
  const raw = at < 0 ? '' : req.originalUrl.slice(at + 1);
  const kept = raw.length <= 4096 ? parsedSearches.get(raw) : undefined;
  if (kept) return kept;
  searchParseStats.parsed++;
  const r = analogueSearchSchema.safeParse(searchQueryFromUrl(req.query as Record<string, unknown>));
  if (!r.success) throw validationError(r.error);
  const q = deepFreeze(r.data);
  if (raw.length <= 4096) parsedSearches.set(raw, q);
  return q;
}

function deepFreeze<T>(v: T): T {
  if (v && typeof v === 'object' && !Object.isFrozen(v)) {
    Object.freeze(v);
    for (const x of Object.values(v)) deepFreeze(x);
  }
  return v;
}

export async function search(req: Request, res: Response) {
  const { json, etag } = await a.searchBody(req.user!, searchQuery(req));
  res.set('ETag', etag).type('json').send(json); // send answers 304 when If-None-Match matches
}
/**
 * Library exports run two at a time per process (each holds a database
 * connection while its reader reads), a few more wait their turn, beyond
 * that 503 `export_busy`.
 */
const EXPORTS_AT_ONCE = 2;
const EXPORTS_WAITING = 8;
const exportSlots = pLimit(EXPORTS_AT_ONCE);

/** Stream an export: headers first, then the pages as they come; a failure after the first bytes cuts the download short (no half file passes for a whole one). */
async function streamExport(req: Request, res: Response, headers: Record<string, string>, run: (q: ReturnType<typeof searchQuery>, out: io.ExportSink) => Promise<void>) {
  const q = searchQuery(req);
  if (exportSlots.activeCount + exportSlots.pendingCount >= EXPORTS_AT_ONCE + EXPORTS_WAITING) {
    res.set('Retry-After', '5');
    throw new AppError(503, 'export_busy', `More than ${EXPORTS_AT_ONCE + EXPORTS_WAITING} library exports are running or waiting; try again in a moment`);
  }
  const out: io.ExportSink = {
    closed: () => res.destroyed || res.writableEnded,
    write: (text) =>
      res.write(text) || res.destroyed
        ? Promise.resolve()
        : new Promise<void>((resolve) => {
            const done = () => {
              res.off('drain', done).off('close', done);
              resolve();
            };
            res.on('drain', done).on('close', done);
          }),
  };
  try {
    await exportSlots(async () => {
      if (res.destroyed) return; // the reader left while waiting for a slot
      res.set(headers);
      await run(q, out);
    });
  } catch (e) {
    if (!res.headersSent) {
      res.removeHeader('Content-Disposition');
      res.removeHeader('Content-Type');
      throw e;
    }
    res.destroy(e instanceof Error ? e : new Error(String(e)));
    return;
  }
  res.end();
}

export async function exportCsv(req: Request, res: Response) {
  await streamExport(req, res, { 'Content-Type': 'text/csv; charset=utf-8', 'Content-Disposition': 'attachment; filename="analogues.csv"' }, io.exportCsv);
}
export async function exportGeoJson(req: Request, res: Response) {
  await streamExport(req, res, { 'Content-Type': 'application/geo+json', 'Content-Disposition': 'attachment; filename="analogues.geojson"' }, io.exportGeoJson);
}
export async function icsChart(_req: Request, res: Response) {
  res.json(a.icsChart());
}
export async function lists(_req: Request, res: Response) {
  res.json(await a.readLists());
}
export async function addListItem(req: Request, res: Response) {
  res.status(201).json(await a.addListItem(req.user!, listParam(req), res.locals.body));
}
export async function removeListItem(req: Request, res: Response) {
  await a.removeListItem(req.user!, listParam(req), String(req.params.value));
  res.status(204).end();
}
export async function savedSearches(req: Request, res: Response) {
  res.json(await a.listSavedSearches(req.user!));
}
export async function saveSearch(req: Request, res: Response) {
  res.status(201).json(await a.saveSearch(req.user!, res.locals.body));
}
export async function deleteSavedSearch(req: Request, res: Response) {
  await a.deleteSavedSearch(req.user!, idParam(req));
  res.status(204).end();
}
export async function lookAlikes(req: Request, res: Response) {
  res.json(await a.lookAlikes(req.user!, res.locals.body));
}
export async function create(req: Request, res: Response) {
  res.status(201).json(await a.createByHand(req.user!, res.locals.body));
}
export async function get(req: Request, res: Response) {
  res.json(await a.getAnalogue(req.user!, idParam(req)));
}
export async function crop(req: Request, res: Response) {
  const obj = await a.openCrop(req.user!, idParam(req));
  res.status(200).set({ 'Content-Type': 'image/jpeg', 'Content-Length': String(obj.size), 'Cache-Control': 'private, max-age=3600' });
  await pipeline(obj.stream, res);
}
export async function update(req: Request, res: Response) {
  res.json(await a.updateAnalogue(req.user!, idParam(req), res.locals.body));
}
export async function remove(req: Request, res: Response) {
  await a.deleteAnalogue(req.user!, idParam(req));
  res.status(204).end();
}
export async function accept(req: Request, res: Response) {
  res.json(await a.decide(req.user!, idParam(req), true));
}
export async function decline(req: Request, res: Response) {
  res.json(await a.decide(req.user!, idParam(req), false, res.locals.body.reason));
}
export async function promote(req: Request, res: Response) {
  res.status(201).json(await a.promote(req.user!, idParam(req), res.locals.body));
}

// ---- import ----

/** One CSV in memory (field `file`), at most IMPORT_MAX_BYTES; larger answers 413 file_too_large. */
export const csvUpload: RequestHandler = (req, res, next) => {
  multer({ storage: multer.memoryStorage(), limits: { fileSize: IMPORT_MAX_BYTES, files: 1, fields: 5, fieldSize: 256 * 1024 } }).single('file')(req, res, (err?: unknown) => {
    if (err instanceof MulterError) {
      if (err.code === 'LIMIT_FILE_SIZE')
        return next(new AppError(413, 'file_too_large', `file: larger than the import limit of ${IMPORT_MAX_BYTES / 1024 / 1024} MB`, [{ path: 'file', message: `larger than ${IMPORT_MAX_BYTES / 1024 / 1024} MB` }]));
      return next(new AppError(400, 'validation_failed', `${err.field ?? 'file'}: ${err.message}`, [{ path: err.field ?? 'file', message: err.message }]));
    }
    if (err) return next(new AppError(400, 'bad_multipart', `not a well-formed multipart/form-data body`, [{ path: '', message: String((err as Error).message ?? err) }]));
    if (!req.file) return next(new AppError(400, 'validation_failed', 'file: attach one CSV file (multipart field "file")', [{ path: 'file', message: 'attach one CSV file' }]));
    next();
  });
};
multipartBody(csvUpload, 'file', 'one CSV file of analogues');

function mappingOf(req: Request, required: boolean) {
  const raw = (req.body ?? {}).mapping;
  if (raw === undefined || raw === '') {
    if (required) throw new AppError(400, 'validation_failed', 'mapping: is required (JSON of { columns, lengthUnit })', [{ path: 'mapping', message: 'is required' }]);
    return null;
  }
  let json: unknown;
  try {
    json = JSON.parse(String(raw));
  } catch {
    throw new AppError(400, 'validation_failed', 'mapping: is not valid JSON', [{ path: 'mapping', message: 'is not valid JSON' }]);
  }
  const r = importMappingSchema.safeParse(json);
  if (!r.success) throw validationError(r.error, 'mapping');
  return r.data;
}

export async function importPreview(req: Request, res: Response) {
  res.json(await io.previewImport(req.file!.buffer, mappingOf(req, false)));
}
export async function importRun(req: Request, res: Response) {
  const mode = (req.body ?? {}).mode ?? 'all';
  if (mode !== 'all' && mode !== 'goodRowsOnly') throw new AppError(400, 'validation_failed', 'mode: must be "all" or "goodRowsOnly"', [{ path: 'mode', message: 'must be "all" or "goodRowsOnly"' }]);
  res.status(201).json(await io.runImport(req.user!, req.file!.buffer, mappingOf(req, true)!, mode));
}
