import type { RequestHandler } from 'express';
import multer from 'multer';
import { AppError } from '../errors.js';

/** One file in multipart field `file`, held in memory up to `maxBytes`; multer's errors become AppErrors. */
export function singleFile(maxBytes: number): RequestHandler {
  const parse = multer({ storage: multer.memoryStorage(), limits: { fileSize: maxBytes, files: 1, fields: 10 } }).single('file');
  return (req, res, next) =>
    parse(req, res, (err: unknown) => {
      if (!err) return req.file ? next() : next(AppError.validation('Attach the CSV file in the form field “file”'));
      if (err instanceof multer.MulterError && err.code === 'LIMIT_FILE_SIZE') {
        return next(new AppError('payload_too_large', `The file is larger than the ${Math.round(maxBytes / 1024 / 1024)} MB limit`));
      }
      if (err instanceof multer.MulterError) return next(AppError.validation(`The upload was not understood: ${err.message}`));
      next(err);
    });
}
