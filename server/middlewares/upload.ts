/**
 * Multipart upload of one section image (field `image`) with explicit limits.
 * The file lands under a private scratch folder `<storage>/tmp/upload-<random>/`
 * with a random name; the folder is removed when the response ends, so a
 * refused or aborted upload leaves nothing behind (an accepted one has been
 * moved into the file store by then).
 */
import fs from 'node:fs';
import multer, { MulterError } from 'multer';
import type { RequestHandler } from 'express';
import { multipartBody } from '../openapi/marks';
import type { Config } from '../config';
import { AppError } from '../errors';
import { fileStoreFor, randomName } from '../storage/fileStore';
import { isSafeText, UNSAFE_TEXT_MESSAGE } from '../../shared/schemas/text';

export const UPLOAD_FIELD = 'image';
export const UPLOAD_LIMITS = { fields: 20, fieldSize: 64 * 1024, fieldNameSize: 100, parts: 22, headerPairs: 200 };

function sizeText(bytes: number) {
  return bytes >= 1024 * 1024 ? `${Math.round((bytes / 1024 / 1024) * 10) / 10} MB` : `${bytes} bytes`;
}

/**
 * busboy's messages for a body that is not well-formed multipart (no boundary,
 * a broken part header, cut off before the closing boundary), with what to
 * tell the client.
 */
const MALFORMED: [RegExp, string][] = [
  [/^Multipart: Boundary not found/, 'the Content-Type header has no multipart boundary'],
  [/^Malformed part header/, 'a part header is malformed'],
  [/^Unexpected end of (form|file)/, 'the body ends before the closing boundary (a truncated upload?)'],
];

function translate(err: unknown, config: Config): unknown {
  if (!(err instanceof MulterError)) {
    const m = err instanceof Error && !('code' in err) ? MALFORMED.find(([re]) => re.test(err.message)) : undefined;
    if (!m) return err;
    const message = `not a well-formed multipart/form-data body: ${m[1]}`;
    return new AppError(400, 'bad_multipart', message, [{ path: '', message }]);
  }
  const field = err.field ?? UPLOAD_FIELD;
  const fail = (status: number, code: string, path: string, message: string) =>
    new AppError(status, code, `${path}: ${message}`, [{ path, message }]);
  switch (err.code) {
    case 'LIMIT_FILE_SIZE':
      return fail(413, 'file_too_large', UPLOAD_FIELD, `the file is larger than the limit of ${sizeText(config.upload.maxFileBytes)}`);
    case 'LIMIT_FILE_COUNT':
      return fail(400, 'validation_failed', UPLOAD_FIELD, 'send exactly one file');
    case 'LIMIT_UNEXPECTED_FILE':
      return fail(400, 'validation_failed', UPLOAD_FIELD, `send the file in the field "${UPLOAD_FIELD}" only (got a file in "${field}")`);
    case 'LIMIT_FIELD_VALUE':
      return fail(400, 'validation_failed', field, `longer than ${sizeText(UPLOAD_LIMITS.fieldSize)}`);
    default:
      return fail(400, 'validation_failed', field, err.message);
  }
}

/** Parse `multipart/form-data` with the section image; puts the text fields in req.body and the file in req.file. */
export function uploadSectionImage(config: Config): RequestHandler {
  const handler: RequestHandler = async (req, res, next) => {
    const dir = await fileStoreFor(config.storageDir).scratchDir('upload');
    res.once('close', () => fs.rm(dir, { recursive: true, force: true }, () => {}));
    const parse = multer({
      storage: multer.diskStorage({ destination: dir, filename: (_req, _file, cb) => cb(null, randomName()) }),
      limits: { ...UPLOAD_LIMITS, fileSize: config.upload.maxFileBytes, files: 1 },
      // file names are UTF-8 (as browsers send them), not Latin-1 bytes that would read as control characters
      defParamCharset: 'utf8',
    }).single(UPLOAD_FIELD);
    parse(req, res, (err?: unknown) => {
      if (err) return next(translate(err, config));
      if (!req.file) {
        return next(
          new AppError(400, 'validation_failed', `${UPLOAD_FIELD}: attach one PNG, JPEG or TIFF file (multipart/form-data field "${UPLOAD_FIELD}")`, [
            { path: UPLOAD_FIELD, message: 'attach one PNG, JPEG or TIFF file' },
          ]),
        );
      }
      if (!isSafeText(req.file.originalname)) {
        const message = `the file name ${UNSAFE_TEXT_MESSAGE}`;
        return next(new AppError(400, 'validation_failed', `${UPLOAD_FIELD}: ${message}`, [{ path: UPLOAD_FIELD, message }]));
      }
      next();
    });
  };
  return multipartBody(handler, UPLOAD_FIELD, 'the section image: one PNG, JPEG or TIFF file');
}
