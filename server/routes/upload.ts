// multer for art set uploads: files go to the temp folder with every limit set (multer's default is
// Infinity); over-limit and any other failure answer with a stable code and leave no temp file behind.
import { randomBytes } from 'node:crypto';
import { mkdirSync } from 'node:fs';
import { rm } from 'node:fs/promises';
import type { RequestHandler } from 'express';
import multer from 'multer';
import { BleedwrightError } from '../../shared/errors.ts';
import { AppError } from '../errors.ts';

export function uploadMiddleware(opts: { tmpDir: string; maxBytes: number; field: string; maxFiles: number }): RequestHandler {
  mkdirSync(opts.tmpDir, { recursive: true });
  const upload = multer({
    storage: multer.diskStorage({
      destination: opts.tmpDir,
      filename: (_req, _file, cb) => cb(null, `upload-${process.pid}-${randomBytes(8).toString('hex')}`),
    }),
    limits: { fileSize: opts.maxBytes, files: opts.maxFiles, fields: 5, fieldSize: 4096, parts: opts.maxFiles + 5, headerPairs: 100 },
  });
  const handler = opts.maxFiles === 1 ? upload.single(opts.field) : upload.array(opts.field, opts.maxFiles);
  return (req, res, next) => {
    handler(req, res, async (err?: unknown) => {
      if (!err) return next();
      await removeUploads(req);
      if (err instanceof multer.MulterError) {
        if (err.code === 'LIMIT_FILE_SIZE') {
          return next(new AppError(413, 'UPLOAD_TOO_LARGE', `The file is larger than ${Math.floor(opts.maxBytes / 1024 / 1024)} MB, the upload limit.`));
        }
        return next(new AppError(400, 'UPLOAD_INVALID', `The upload could not be accepted (${err.message}).`));
      }
      next(err);
    });
  };
}

/** Removes whatever multer stored for this request. */
export async function removeUploads(req: Parameters<RequestHandler>[0]): Promise<void> {
  const files = [req.file, ...(Array.isArray(req.files) ? req.files : [])].filter((f): f is Express.Multer.File => !!f?.path);
  for (const f of files) await rm(f.path, { force: true });
}

/** Engine errors (bad archives and the like) as API errors with the engine's stable code. */
export function engineError(err: unknown): unknown {
  if (err instanceof BleedwrightError) return new AppError(err.status === 413 ? 413 : err.status >= 500 ? 422 : err.status, err.code, `${err.message}.`.replace(/\.\.$/, '.'));
  return err;
}
