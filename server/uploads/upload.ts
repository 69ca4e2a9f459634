import { createHash } from 'node:crypto';
import multer from 'multer';
import type { RequestHandler } from 'express';
import type { Config } from '../config';
import { AppError, badRequest, unprocessable } from '../errors';

export type UploadedFile = { filename: string; mediaType: string; size: number; sha256: string; text: string };

/** One file per request, kept in memory (the limit is small), under the form field "file". */
export function singleFile(config: Config): RequestHandler {
  const handler = multer({ storage: multer.memoryStorage(), limits: { fileSize: config.UPLOAD_LIMIT_BYTES, files: 1, fields: 10, fieldSize: 64 * 1024 } }).single('file');
  const limitMb = (config.UPLOAD_LIMIT_BYTES / 1e6).toFixed(1);
  return (req, res, next) =>
    handler(req, res, (err?: unknown) => {
      if (err instanceof multer.MulterError) {
        if (err.code === 'LIMIT_FILE_SIZE') return next(new AppError(413, `The file is larger than the upload limit of ${limitMb} MB. Split it, or ask an admin to raise UPLOAD_LIMIT_BYTES.`, 'too_large'));
        return next(badRequest(`The upload could not be read (${err.message}). Send one file in the form field "file".`));
      }
      next(err);
    });
}

/** The uploaded file as UTF-8 text; refuses a missing, empty or binary file. */
export function readUpload(file: Express.Multer.File | undefined): UploadedFile {
  if (!file) throw badRequest('Choose a file to upload (form field "file").');
  if (file.size === 0) throw unprocessable(`The file "${file.originalname}" is empty.`);
  const buffer = file.buffer;
  if (buffer.includes(0)) throw unprocessable(`The file "${file.originalname}" is not a text file. Upload a CSV or JSON file.`);
  let text: string;
  try {
    text = new TextDecoder('utf-8', { fatal: true }).decode(buffer);
  } catch {
    throw unprocessable(`The file "${file.originalname}" is not valid UTF-8 text. Save it as UTF-8 CSV or JSON and upload it again.`);
  }
  if (text.charCodeAt(0) === 0xfeff) text = text.slice(1);
  if (!text.trim()) throw unprocessable(`The file "${file.originalname}" is empty.`);
  return {
    filename: file.originalname.slice(0, 255),
    mediaType: file.mimetype || 'application/octet-stream',
    size: file.size,
    sha256: createHash('sha256').update(buffer).digest('hex'),
    text,
  };
}

export const looksLikeJson = (f: UploadedFile) => /\.json$/i.test(f.filename) || /^\s*[[{]/.test(f.text);
