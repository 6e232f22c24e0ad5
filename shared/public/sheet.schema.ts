/**
 * Inspection sheets: per part of a published build, the checked clearances its public entries
 * published with readings on that part, printable as a PDF with a QR code to a verification page
 * that reads the same figures from the database again and says whether they are still current.
 */
import { z } from 'zod';
import { bandInUnitSchema, bandUmSchema } from '../clearances/clearance.schema';
import { dbIdText } from '../http/db-values.schema';
import { calibrationStates } from '../instruments/instrument.schema';
import { anyUnitSchema } from '../measure/calc.schema';
import { quantityKinds } from '../measure/quantities';
import { readingUnitSchema } from '../measure/record-units';
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
  /** As judged (after a zero offset), in the reading's unit: "3.5 thou", "35 lbf·ft". */
  display: z.string(),
  /** The figures as read off the instrument, before any zero offset: "0.5595 in", "blade 0.003 enters, 0.004 does not (in)". */
  read: z.string(),
  /**
   * The same figure in its clearance's unit at the places it was written to (NIST SP 811 B.7.2), so
   * it reads like its neighbours: "3.5 thou" in a clearance in inches is "0.0035 in".
   */
  figure: z.string(),
  instrumentId: z.number().int().positive(),
  instrumentName: z.string(),
  /** The instrument's serial from the builder's register ('' when none is recorded). */
  instrumentSerial: z.string(),
  takenOn: z.string(),
  /** The zero check of that instrument on that day whose offset was taken off: "+0.0001 in", "−0.5 psi". */
  zeroOffset: z.object({ offset: z.string(), unit: readingUnitSchema, text: z.string() }).nullable(),
  /** The instrument is zero-checked, yet no check was recorded on the day (the reading says so). */
  zeroCheckMissing: z.boolean(),
  checkedBy: z.string(),
  checkedAt: z.string(),
});
export type SheetReading = z.infer<typeof sheetReadingSchema>;

/** One checked clearance on a sheet, as published. */
export const sheetClearanceSchema = z.object({
  key: z.string(),
  name: z.string(),
  /** What it is; a ratio's unit is "1". Sheets printed before other quantities are lengths. */
  quantity: z.enum(quantityKinds).default('length'),
  unit: anyUnitSchema,
  /** Lengths only (null for any other quantity): the value and U in µm. */
  valueUm: z.number().nullable(),
  expandedUncertaintyUm: z.number().nonnegative().nullable(),
  /** The value and U in `unit`, for every quantity. */
  value: z.number().optional(),
  expandedUncertainty: z.number().nonnegative().optional(),
  coverageFactor: z.number(),
  /** "0.0047 in ± 0.00031 in (k = 2)", "10.19 ± 0.11 (95 %, k = 2.03)". */
  display: z.string(),
  verdict: z.enum(verdicts).nullable(),
  /** "within spec", "out of spec", "too close to call" (or "no spec"). */
  verdictWords: z.string(),
  /** Against the preferred band and the reject limit, by the same rule: secondary facts, never a second verdict. */
  preferredVerdict: z.enum(verdicts).nullable(),
  rejectVerdict: z.enum(verdicts).nullable(),
  rule: z.enum(decisionRules).nullable(),
  ruleText: z.string().nullable(),
  spec: z.object({ name: z.string(), version: z.number().int().positive(), sourceKind: z.string(), sourceText: z.string() }).nullable(),
  /** The spec's limits in µm, as judged (lengths only). */
  band: bandUmSchema.nullable(),
  /** The spec's limits in `unit`, as judged (any quantity). */
  bandInUnit: bandInUnitSchema.nullable().optional(),
  /** The limits written out in the clearance's unit: "0.0015–0.0040 in", "9.5–10.5"; null where the spec has none. */
  limits: z.object({ band: z.string().nullable(), preferred: z.string().nullable(), reject: z.string().nullable() }),
  /** The preferred band and reject limit in plain words: "Outside the preferred band 0.0020–0.0030 in.". */
  limitFacts: z.array(z.string()),
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
  /** From the builder's register ('' when none is recorded). */
  serial: z.string(),
  /** The calibration on record in the register now, and the day it falls due (null when none). */
  calibratedOn: z.string().nullable(),
  calibrationDueOn: z.string().nullable(),
  /** The days the sheet's readings were taken with it, earliest first. */
  readingDays: z.array(z.string()),
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
  /** The story's title as public now; null once it is no longer public. */
  title: z.string().nullable(),
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
