import fsp from 'node:fs/promises';
import type { Request } from 'express';
import multer from 'multer';
import { isTextWithoutNul, noNulMessage } from '@shared/http/db-values.schema';
import { badRequest } from './errors';

/** What busboy (under multer) says about a body that is cut short or garbled: the sender's fault. */
const malformedBody = [
  /^Unexpected end of (form|file)$/,
  /^Malformed part header$/,
  /^Malformed content type$/,
  /^Multipart: Boundary not found$/,
  /^Unsupported content type/,
  /^Missing Content-Type$/,
];

/**
 * A failed multipart upload in the error contract: multer's refusals (too many parts, an unexpected
 * field…) and a truncated or garbled body answer 400 with what to send instead; anything else (the
 * disk, a lost connection) is passed on unchanged for the error middleware to judge.
 * `expected` tells the sender what the route takes; `field` is the file field.
 */
export function multipartFailure(err: unknown, expected: string, field: string): unknown {
  if (err instanceof multer.MulterError) {
    return badRequest(`The upload is not in the expected form (${err.message}). ${expected}`, [{ path: err.field ?? field, message: err.message }]);
  }
  if (err instanceof Error && !('code' in err) && malformedBody.some((m) => m.test(err.message))) {
    return badRequest(`The upload arrived cut short or garbled (${err.message}), so nothing was kept. ${expected}`, [{ path: field, message: err.message }]);
  }
  return err;
}

/**
 * After multer: refuses (400, the received file deleted) a file name or text field holding a NUL
 * character, which PostgreSQL text cannot store. Returns the error to pass on, or null.
 */
export async function refuseNulInUpload(req: Request, field: string): Promise<unknown> {
  const body = (req.body ?? {}) as Record<string, unknown>;
  const badField = Object.keys(body).find((k) => !isTextWithoutNul(k) || (typeof body[k] === 'string' && !isTextWithoutNul(body[k])));
  const badName = req.file !== undefined && !isTextWithoutNul(req.file.originalname);
  if (badField === undefined && !badName) return null;
  if (req.file?.path) await fsp.rm(req.file.path, { force: true });
  return badName
    ? badRequest(`The file name ${noNulMessage}. Rename the file and send it again.`, [{ path: field, message: `file name ${noNulMessage}` }])
    : badRequest(`The field "${badField}" ${noNulMessage}.`, [{ path: badField, message: noNulMessage }]);
}
