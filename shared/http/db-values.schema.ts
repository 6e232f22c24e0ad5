/**
 * Values a request may carry only if PostgreSQL can hold them: checked at the edge, so a malformed
 * request answers 400 `invalid_request` instead of reaching the database and failing there
 * (OWASP ASVS 5.0 V2.2.1 input validation, V16.5 errors). Used by the request schemas (bodies,
 * queries, params) of every feature; responses keep their plain schemas.
 */
import { z } from 'zod';

/** PostgreSQL INTEGER (int4) range. */
export const DB_INTEGER_MIN = -2_147_483_648;
export const DB_INTEGER_MAX = 2_147_483_647;
/** PostgreSQL BIGINT (int8) maximum, as a BigInt (beyond a double's exact integers). */
export const DB_BIGINT_MAX = 9_223_372_036_854_775_807n;

const tooLarge = `at most ${DB_INTEGER_MAX}`;

/** A whole number an INTEGER column holds (JSON bodies). */
export const dbInteger = z.number().int().min(DB_INTEGER_MIN, `at least ${DB_INTEGER_MIN}`).max(DB_INTEGER_MAX, tooLarge);
/** A positive whole number an INTEGER column holds: ids and lock versions in JSON bodies. */
export const dbPositiveInteger = z.number().int().min(1, 'at least 1').max(DB_INTEGER_MAX, tooLarge);
/** An id (or other positive INTEGER) in a path or query string. */
export const dbIdText = z.coerce.number().int().min(1, 'at least 1').max(DB_INTEGER_MAX, tooLarge);
/** A non-negative INTEGER in a path or query string. */
export const dbNonNegativeIntegerText = z.coerce.number().int().min(0, 'at least 0').max(DB_INTEGER_MAX, tooLarge);
/** A positive BIGINT id as decimal text (ids a double cannot hold exactly stay text). */
export const dbBigintIdText = z
  .string()
  .regex(/^[1-9]\d{0,18}$/, 'must be a positive whole number')
  .refine((v) => BigInt(v) <= DB_BIGINT_MAX, `at most ${DB_BIGINT_MAX}`);

/** PostgreSQL text cannot hold the NUL character (U+0000). */
export const isTextWithoutNul = (v: string) => !v.includes('\u0000');
export const noNulMessage = 'must not contain a NUL character';
/**
 * Text a TEXT/VARCHAR column can hold: no NUL. Chain trim/min/max/regex on it as on `z.string()`
 * (the checks run in order, so the NUL check comes first).
 */
export const textWithoutNul = z.string().refine(isTextWithoutNul, noNulMessage);

const instantPattern = /^(\d{4})-(\d{2})-(\d{2})T(\d{2}):(\d{2})(?::(\d{2})(\.\d{1,6})?)?Z$/;

/**
 * A UTC instant as ISO 8601 text (`2026-03-01T09:30Z`, `…:05Z`, `…:05.123456Z`) that names a real
 * time: month 1–12, a day the month has, hour 0–23, minute and second 0–59.
 */
export function isIsoInstant(text: string): boolean {
  const m = instantPattern.exec(text);
  if (!m) return false;
  const [year, month, day, hour, minute, second] = m.slice(1, 7).map((p) => Number(p ?? 0)) as [number, number, number, number, number, number];
  if (year < 1 || month < 1 || month > 12 || hour > 23 || minute > 59 || second > 59) return false;
  const date = new Date(Date.UTC(year, month - 1, day));
  date.setUTCFullYear(year); // years 0–99 are not 1900–1999
  return day >= 1 && date.getUTCDate() === day && date.getUTCMonth() === month - 1;
}
export const isoInstant = z.string().refine(isIsoInstant, 'must be a real UTC time like 2026-03-01T09:30:00.000Z');

/**
 * A keyset cursor `<ISO instant>_<id>` (a time and an INTEGER id), as list responses hand out;
 * `message` names the parameter for the person reading the error.
 */
export function instantIdCursor(message: string) {
  return z.string().refine((v) => {
    const cut = v.lastIndexOf('_');
    if (cut < 0) return false;
    const id = v.slice(cut + 1);
    return isIsoInstant(v.slice(0, cut)) && /^[1-9]\d{0,9}$/.test(id) && Number(id) <= DB_INTEGER_MAX;
  }, message);
}
