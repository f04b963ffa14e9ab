/**
 * Multipart upload of one SEG-Y file (field `file`), read by the SEG-Y reader
 * while it arrives: a multer storage engine pipes the part's stream through
 * `ingestSegy` (server/segy/ingest.ts) into a private scratch folder
 * `<storage>/tmp/upload-<owner>-<random>/segy/`, so the file is never held
 * whole (memory bound in ingest.ts) and never written as is. The form's text
 * fields must come before the file (the byte overrides steer the reading);
 * a field sent after it answers 400 naming it. A refused file answers 422
 * `{ code, message, details: [{ path: 'file', field, bytes, message }] }`
 * naming the header field and its bytes. The scratch folder is removed when
 * the response ends, so a refused or aborted upload leaves nothing behind
 * (an accepted one has been moved into the file store by then).
 */
import fs from 'node:fs';
import fsp from 'node:fs/promises';
import path from 'node:path';
import multer, { MulterError } from 'multer';
import type { Readable } from 'node:stream';
import type { RequestHandler } from 'express';
import { multipartBody } from '../openapi/marks';
import type { Config } from '../config';
import { AppError, validationError } from '../errors';
import { fileStoreFor } from '../storage/fileStore';
import { isSafeText, UNSAFE_TEXT_MESSAGE } from '../../shared/schemas/text';
import { segyUploadSchema, type SegyUploadFields } from '../../shared/schemas/segy';
import { ingestSegy, type IngestResult } from '../segy/ingest';
import { SegyError } from '../segy/errors';
import { proj4Definition } from '../segy/crs';
import { UPLOAD_LIMITS } from './upload';

export const SEGY_FIELD = 'file';
const SEGY_DEFAULT_MAX = 4 * 1024 * 1024 * 1024;
/** Fields that steer the reading, so they must arrive before the file. */
const READ_FIELDS = ['cdpXByte', 'cdpYByte', 'inlineByte', 'crosslineByte', 'cdpSpacing', 'domain', 'epsg'] as const;

export interface SegyUploadedFile {
  dir: string;
  size: number;
  originalname: string;
  ingest: IngestResult;
  fields: SegyUploadFields;
}

export function segyError(e: SegyError): AppError {
  return new AppError(422, e.code, e.message, [{ path: SEGY_FIELD, message: e.message, ...e.details }]);
}

async function* counted(stream: Readable, counter: { bytes: number }): AsyncGenerator<Uint8Array> {
  for await (const chunk of stream) {
    counter.bytes += (chunk as Buffer).length;
    yield chunk as Buffer;
  }
}

function checkFields(body: unknown): SegyUploadFields {
  const r = segyUploadSchema.safeParse(body ?? {});
  if (!r.success) throw validationError(r.error);
  if (r.data.epsg !== undefined && !proj4Definition(r.data.epsg)) {
    const message = `EPSG:${r.data.epsg} is not among the supported codes (4326, 32601–32660, 32701–32760, 25828–25838, 26901–26923)`;
    throw new AppError(400, 'validation_failed', `epsg: ${message}`, [{ path: 'epsg', message }]);
  }
  return r.data;
}

function translate(err: unknown, config: Config): unknown {
  if (!(err instanceof MulterError)) {
    if (err instanceof Error && /^(Multipart: Boundary not found|Malformed part header|Unexpected end of (form|file))/.test(err.message)) {
      const message = 'not a well-formed multipart/form-data body';
      return new AppError(400, 'bad_multipart', message, [{ path: '', message }]);
    }
    return err;
  }
  const field = err.field ?? SEGY_FIELD;
  const fail = (status: number, code: string, p: string, message: string) => new AppError(status, code, `${p}: ${message}`, [{ path: p, message }]);
  switch (err.code) {
    case 'LIMIT_FILE_SIZE':
      return fail(413, 'file_too_large', SEGY_FIELD, `the file is larger than the limit of ${Math.round((config.upload.maxSegyBytes ?? SEGY_DEFAULT_MAX) / 1024 / 1024)} MB`);
    case 'LIMIT_FILE_COUNT':
      return fail(400, 'validation_failed', SEGY_FIELD, 'send exactly one file');
    case 'LIMIT_UNEXPECTED_FILE':
      return fail(400, 'validation_failed', SEGY_FIELD, `send the file in the field "${SEGY_FIELD}" only (got a file in "${field}")`);
    default:
      return fail(400, 'validation_failed', field, err.message);
  }
}

/** Parse the SEG-Y upload form; puts the text fields in req.body and the ingested file in res.locals.segy. */
export function uploadSegy(config: Config): RequestHandler {
  const handler: RequestHandler = async (req, res, next) => {
    const dir = await fileStoreFor(config.storageDir).scratchDir('upload');
    res.once('close', () => fs.rm(dir, { recursive: true, force: true }, () => {}));
    let received: SegyUploadedFile | null = null;
    const storage: multer.StorageEngine = {
      _handleFile(request, file, cb) {
        (async () => {
          if (!isSafeText(file.originalname)) {
            const message = `the file name ${UNSAFE_TEXT_MESSAGE}`;
            throw new AppError(400, 'validation_failed', `${SEGY_FIELD}: ${message}`, [{ path: SEGY_FIELD, message }]);
          }
          const fields = checkFields(request.body);
          const out = path.join(dir, 'segy');
          await fsp.mkdir(out);
          const counter = { bytes: 0 };
          const given = { cdpX: fields.cdpXByte, cdpY: fields.cdpYByte, inline: fields.inlineByte, crossline: fields.crosslineByte };
          const overrides = Object.fromEntries(Object.entries(given).filter(([, v]) => v !== undefined));
          const ingest = await ingestSegy(counted(file.stream, counter), out, { overrides, cdpSpacing: fields.cdpSpacing, domain: fields.domain });
          received = { dir: out, size: counter.bytes, originalname: file.originalname, ingest, fields };
        })().then(
          () => cb(null, { size: received!.size }),
          (e) => {
            file.stream.resume(); // let the rest of the body drain
            cb(e instanceof SegyError ? segyError(e) : e);
          },
        );
      },
      _removeFile(_req, _file, cb) {
        cb(null);
      },
    };
    const parse = multer({
      storage,
      limits: { ...UPLOAD_LIMITS, fileSize: config.upload.maxSegyBytes ?? SEGY_DEFAULT_MAX, files: 1 },
      defParamCharset: 'utf8',
    }).single(SEGY_FIELD);
    parse(req, res, (err?: unknown) => {
      if (err) return next(translate(err, config));
      if (!received) {
        const message = 'attach one SEG-Y file (.sgy, .segy)';
        return next(new AppError(400, 'validation_failed', `${SEGY_FIELD}: ${message}`, [{ path: SEGY_FIELD, message }]));
      }
      for (const k of READ_FIELDS) {
        const before = (received.fields as Record<string, unknown>)[k];
        const after = segyUploadSchema.shape[k].safeParse((req.body as Record<string, unknown>)[k]);
        if (after.success && JSON.stringify(after.data) !== JSON.stringify(before)) {
          const message = 'send this field before the file in the form (it steers how the file is read)';
          return next(new AppError(400, 'validation_failed', `${k}: ${message}`, [{ path: k, message }]));
        }
      }
      res.locals.segy = received;
      next();
    });
  };
  return multipartBody(handler, SEGY_FIELD, 'the SEG-Y file (rev 0, 1 or 2)');
}
