import express, { type Request, type RequestHandler } from 'express';
import multer from 'multer';
import { formatBytes, KB } from '../../shared/bytes';
import { AppError } from './errors';


const tooLarge = (limit: number) =>
  new AppError(413, 'too_large', `The upload is larger than the limit of ${formatBytes(limit)}; split the file or ask the administrator to raise the limit`);

const rawBodies = new WeakMap<Request, Buffer>();

/** The bytes of a JSON upload body as received (an `Idempotency-Key` retry is recognised by them). */
export const rawJsonBody = (req: Request): Buffer | undefined => rawBodies.get(req);

/**
 * JSON bodies of result uploads may be as large as files (the API-wide JSON limit is smaller).
 * Mounted before the API-wide parser, which then leaves the parsed body alone.
 */
export function resultJson(limitBytes: number): RequestHandler {
  const parse = express.json({ limit: limitBytes, verify: (req, _res, buf) => void rawBodies.set(req as Request, buf) });
  return (req, res, next) =>
    parse(req, res, (err?: unknown) => {
      if ((err as { status?: number } | undefined)?.status === 413) return next(tooLarge(limitBytes));
      next(err);
    });
}

/**
 * `multipart/form-data` with one file in the field `file` (kept in memory, at most `limitBytes`)
 * and text fields; other content types pass through untouched (JSON was parsed already).
 */
export function multipartUpload(limitBytes: number): RequestHandler {
  const parse = multer({
    storage: multer.memoryStorage(),
    // Browsers and curl send file names as UTF-8 without saying so.
    defParamCharset: 'utf8',
    limits: { fileSize: limitBytes, files: 1, fields: 20, fieldSize: 256 * KB },
  }).single('file');
  return (req, res, next) => {
    if (!req.is('multipart/form-data')) return next();
    parse(req, res, (err?: unknown) => {
      if (!err) return next();
      if (err instanceof multer.MulterError) {
        if (err.code === 'LIMIT_FILE_SIZE') return next(tooLarge(limitBytes));
        if (err.code === 'LIMIT_UNEXPECTED_FILE' || err.code === 'LIMIT_FILE_COUNT') {
          return next(new AppError(400, 'validation_failed', 'Send one file, in the form field "file"', [{ field: err.field ?? 'file', message: 'send one file, in the form field "file"' }]));
        }
        return next(new AppError(400, 'bad_request', `The upload could not be read: ${err.message}`));
      }
      next(new AppError(400, 'bad_request', `The upload could not be read: ${(err as Error).message ?? 'malformed multipart body'}`));
    });
  };
}
