/**
 * One uploaded file in a multipart field, kept in memory. Every way an
 * upload can be malformed (no boundary, a truncated body, a second file, a
 * file too large, an unexpected field) is a 400 naming the file field, never
 * a 500; and the file's name, stored and shown again, follows the name rule
 * (shared/names.ts).
 */
import type { Request, RequestHandler } from 'express';
import multer from 'multer';
import { nameProblem } from '../../shared/names.ts';
import { badRequest } from './errors.ts';

export const FILE_NAME_MAX = 200;

export function singleFileUpload(field: string, opts: { maxBytes: number; what: string }): RequestHandler {
  // A browser sends the file's name as UTF-8 (multer would read it as Latin-1 and store it garbled).
  const upload = multer({ storage: multer.memoryStorage(), limits: { fileSize: opts.maxBytes, files: 1 }, defParamCharset: 'utf8' }).single(field);
  return (req, res, next) => {
    upload(req, res, (err: unknown) => {
      if (!err) return next();
      if (err instanceof multer.MulterError) {
        const message = err.code === 'LIMIT_FILE_SIZE' ? `${opts.what} is larger than ${opts.maxBytes / 1024} KB` : `Upload refused: ${err.message}`;
        return next(badRequest(message, { field: err.field ?? field }));
      }
      // busboy's own errors: "Multipart: Boundary not found", "Unexpected end of form", a malformed part header.
      const detail = err instanceof Error && err.message ? `: ${err.message}` : '';
      next(badRequest(`The upload is not a well-formed multipart form with ${opts.what.toLowerCase()} in the "${field}" field${detail}`, { field }));
    });
  };
}

/** The uploaded file's name as it may be stored: trimmed, and refused (naming the field) when the name rule refuses it. */
export function storedFileName(req: Request, field: string): string {
  const name = (req.file?.originalname ?? '').trim();
  const problem = nameProblem(name);
  if (problem) throw badRequest(`${field}: the file name ${problem}; rename the file and upload it again`, { field });
  if (name.length > FILE_NAME_MAX) throw badRequest(`${field}: the file name is longer than ${FILE_NAME_MAX} characters`, { field });
  return name;
}
