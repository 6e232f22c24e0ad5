/**
 * Inspection sheets: per part of a published build, the checked clearances its public entries
 * published with readings on that part, printable as a PDF with a QR code to a verification page
 * that reads the same figures from the database again and says whether they are still current.
 */
import { z } from 'zod';
import { dbIdText } from '../http/db-values.schema';
import { calibrationStates } from '../instruments/instrument.schema';
import { unitSchema } from '../measure/calc.schema';
import { decisionRules, verdicts } from '../measure/spec';
import { readingWarningSchema } from '../readings/reading.schema';
import { publicBuilderRefSchema } from './public-story.schema';

/** Path parameters of the sheet, PDF and verification routes. */
export const partParamsSchema = z.object({ partId: dbIdText });

/** Query of the sheet and the PDF: one entry only (`story`), or every public entry when absent. */
export const sheetQuerySchema = z.object({ story: dbIdText.optional() });

const ids = z.union([dbIdText, z.array(dbIdText).min(1).max(50)]).transform((v) => (Array.isArray(v) ? v : [v]));

/**
 * Query of `GET /api/public/verify/parts/:partId`: the entries a sheet was printed from, as
 * `story=<id>&rev=<n>` pairs (repeated for a sheet of several entries, in the same order).
 */
export const verifyQuerySchema = z
  .object({ story: ids, rev: ids })
  .refine((q) => q.story.length === q.rev.length, { path: ['rev'], message: 'give one rev for each story' });
export type VerifyQuery = z.infer<typeof verifyQuerySchema>;

/** A publication a sheet draws on. */
export const sheetPublicationSchema = z.object({
  storyId: z.number().int().positive(),
  revision: z.number().int().positive(),
  title: z.string(),
  publishedAt: z.string(),
  publishedBy: z.string(),
});

/** A reading on the part behind a sheet's clearance. */
export const sheetReadingSchema = z.object({
  key: z.string(),
  name: z.string(),
  display: z.string(),
  instrumentId: z.number().int().positive(),
  instrumentName: z.string(),
  takenOn: z.string(),
  checkedBy: z.string(),
  checkedAt: z.string(),
});

/** One checked clearance on a sheet, as published. */
export const sheetClearanceSchema = z.object({
  key: z.string(),
  name: z.string(),
  unit: unitSchema,
  valueUm: z.number(),
  expandedUncertaintyUm: z.number().nonnegative(),
  coverageFactor: z.number(),
  /** "0.0047 in ± 0.00031 in (k = 2)". */
  display: z.string(),
  verdict: z.enum(verdicts).nullable(),
  /** "within spec", "out of spec", "too close to call" (or "no spec"). */
  verdictWords: z.string(),
  rule: z.enum(decisionRules).nullable(),
  ruleText: z.string().nullable(),
  spec: z.object({ name: z.string(), version: z.number().int().positive(), sourceKind: z.string(), sourceText: z.string() }).nullable(),
  checkedBy: z.string(),
  checkedAt: z.string(),
  /** The publication it comes from. */
  storyId: z.number().int().positive(),
  revision: z.number().int().positive(),
  readings: z.array(sheetReadingSchema),
});
export type SheetClearance = z.infer<typeof sheetClearanceSchema>;

/** An instrument a sheet's readings were taken with, and its calibration on those days. */
export const sheetInstrumentSchema = z.object({
  id: z.number().int().positive(),
  name: z.string(),
  /** The worst state over the readings on the sheet (overdue > no record > in date). */
  calibration: z.enum(calibrationStates),
  warnings: z.array(readingWarningSchema),
});

/** Response of `GET /api/public/parts/:partId/sheet` (404 when no public entry has a reading on the part). */
export const partSheetSchema = z.object({
  part: z.object({ id: z.number().int().positive(), name: z.string(), serial: z.string() }),
  build: z.object({ id: z.number().int().positive(), title: z.string(), subject: z.string() }),
  builder: publicBuilderRefSchema,
  publications: z.array(sheetPublicationSchema),
  clearances: z.array(sheetClearanceSchema),
  instruments: z.array(sheetInstrumentSchema),
  /** Moderators who checked the figures. */
  checkedBy: z.array(z.string()),
  /** The verification page the QR code opens: `<site>/verify/parts/:partId?story=…&rev=…`. */
  verifyUrl: z.string(),
  /** `/sheets/parts/:partId.pdf` (with `?story=` when the sheet is of one entry). */
  pdfUrl: z.string(),
  /** The caution printed on every sheet. */
  caution: z.string(),
});
export type PartSheet = z.infer<typeof partSheetSchema>;

/** One entry of a verified sheet: the revision printed and the one public now. */
export const verifiedEntrySchema = z.object({
  storyId: z.number().int().positive(),
  printedRevision: z.number().int().positive(),
  /** Null when the entry is no longer public (withdrawn). */
  currentRevision: z.number().int().positive().nullable(),
  current: z.boolean(),
});

/**
 * Response of `GET /api/public/verify/parts/:partId`: the figures of the printed entries read
 * from the database now (the current publications), and whether the sheet is still current.
 */
export const verifySheetSchema = z.object({
  /** Every entry printed is still public at the revision printed. */
  current: z.boolean(),
  entries: z.array(verifiedEntrySchema),
  /** The sheet as it stands now, for the entries printed that are still public. */
  sheet: partSheetSchema.nullable(),
  checkedAt: z.string(),
});
export type VerifySheet = z.infer<typeof verifySheetSchema>;
