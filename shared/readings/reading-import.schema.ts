/**
 * Importing readings from a CSV file (`POST /api/builds/:buildId/readings/import`): the body, the
 * preview the server answers with, and the rule that maps a file's columns to reading fields. The
 * columns are the export's (`readingCsvColumns`), so an exported file imports back unchanged.
 */
import { z } from 'zod';
import { readingKinds } from './reading.schema';

/** Largest CSV text accepted, in characters (UTF-16 code units; a 5 MB file of plain text fits). */
export const MAX_IMPORT_CSV_CHARS = 5 * 1024 * 1024;

/** Most data rows one import may hold: one bench session's readings are far fewer. */
export const MAX_IMPORT_ROWS = 5000;

/**
 * The reading fields a column can fill, in the export's column order. The export's other columns
 * (estimate, uncertainties, review state, warnings, who logged it) are worked out or set by the
 * server, so an import leaves them alone.
 */
export const importFields = [
  'key',
  'name',
  'kind',
  'unit',
  'value',
  'passes',
  'stops',
  'values',
  'instrument',
  'part',
  'clip',
  'at_s',
  'taken_on',
  'temperature_c',
  'material',
  'note',
] as const;
export type ImportField = (typeof importFields)[number];

/** What each field is, in the words of the dialog's mapping selects. */
export const importFieldLabels: Record<ImportField, string> = {
  key: 'Key',
  name: 'Name',
  kind: 'Kind (direct, bracket, repeated)',
  unit: 'Unit',
  value: 'Value (one indication)',
  passes: 'Blade that enters',
  stops: 'Blade that does not enter',
  values: 'Repeated values',
  instrument: 'Instrument (its name)',
  part: 'Part (its name)',
  clip: 'Clip (its title)',
  at_s: 'Time in the clip (s)',
  taken_on: 'Day taken (YYYY-MM-DD)',
  temperature_c: 'Part temperature (°C)',
  material: 'Material',
  note: 'Note',
};

/** Other headers a spreadsheet or data logger may use for a field (compared after `headerWords`). */
const aliases: Record<ImportField, readonly string[]> = {
  key: ['reading_key', 'id'],
  name: ['reading_name', 'description', 'feature', 'measurement'],
  kind: ['type', 'reading_kind'],
  unit: ['units'],
  value: ['reading', 'figure', 'indication', 'measured', 'size'],
  passes: ['enters', 'go'],
  stops: ['does_not_enter', 'no_go', 'nogo'],
  values: ['repeats', 'repeated_values'],
  instrument: ['instrument_name', 'gauge', 'tool'],
  part: ['part_name'],
  clip: ['clip_title', 'video'],
  at_s: ['time', 'at', 'time_s', 'seconds', 'timestamp'],
  taken_on: ['date', 'day', 'measured_on'],
  temperature_c: ['temperature', 'temp', 'temp_c'],
  material: [],
  note: ['notes', 'comment', 'comments', 'remarks'],
};

/** A header as compared: trimmed, lower case, runs of spaces, dashes and dots as one underscore; a trailing "(s)"-style unit kept as a word. */
export function headerWords(header: string): string {
  return header
    .replace(/^\uFEFF/, '')
    .trim()
    .toLowerCase()
    .replace(/[()[\]]/g, ' ')
    .replace(/[\s\-.]+/g, '_')
    .replace(/^_+|_+$/g, '');
}

/** Which column each field takes its cells from, or null when none. */
export type ImportMapping = Record<ImportField, string | null>;

/**
 * The column each field reads by default: the column named as the export names the field, else
 * the first column named by one of its aliases ("Reading" → value, "Time" → at_s, "Date" →
 * taken_on), ignoring case. A column is used for one field at most; `override` wins field by field
 * (null leaves the field without a column).
 */
export function mapColumns(columns: readonly string[], override: Partial<Record<ImportField, string | null>> = {}): ImportMapping {
  const words = columns.map(headerWords);
  const used = new Set<string>();
  const mapping = Object.fromEntries(importFields.map((f) => [f, null])) as ImportMapping;
  for (const f of importFields) {
    if (f in override) {
      const wanted = override[f] ?? null;
      mapping[f] = wanted;
      if (wanted !== null) used.add(wanted);
    }
  }
  const free = (i: number) => !used.has(columns[i]!);
  // Exact names first, so an export's "value" is never taken by another field's alias.
  for (const pass of ['exact', 'alias'] as const) {
    for (const f of importFields) {
      if (f in override || mapping[f] !== null) continue;
      const names = pass === 'exact' ? [f] : aliases[f];
      const i = words.findIndex((w, index) => free(index) && names.includes(w));
      if (i >= 0) {
        mapping[f] = columns[i]!;
        used.add(columns[i]!);
      }
    }
  }
  return mapping;
}

/** Seconds as a spreadsheet may write them ("12.4", "1:05.2", "0:01:05") → milliseconds, or null. */
export function secondsToMs(text: string): number | null {
  const t = text.trim().replace(/\s*s$/i, '');
  if (!/^\d+(?:\.\d+)?$|^\d+(?::[0-5]?\d){1,2}(?:\.\d+)?$/.test(t)) return null;
  const parts = t.split(':').map(Number);
  const seconds = parts.reduce((sum, p) => sum * 60 + p, 0);
  return Number.isFinite(seconds) ? Math.round(seconds * 1000) : null;
}

/** "0.5642 0.5643" or "0.5642 in 0.5643 in" or "0.5642; 0.5643" → one text per value. */
export function splitValues(cell: string): string[] {
  if (/[;|]/.test(cell)) return cell.split(/[;|]/).map((v) => v.trim()).filter(Boolean);
  const out: string[] = [];
  for (const token of cell.trim().split(/\s+/).filter(Boolean)) {
    // A token that does not start like a number is the unit of the one before ("0.5642 in").
    if (out.length > 0 && !/^[+\-−]?[\d.]/.test(token)) out[out.length - 1] += ` ${token}`;
    else out.push(token);
  }
  return out;
}

/** Body of `POST /api/builds/:buildId/readings/import`. */
export const readingImportRequestSchema = z.strictObject({
  /** The file's text (a leading byte-order mark is allowed). */
  csv: z
    .string({ error: 'send the CSV file as text' })
    .max(MAX_IMPORT_CSV_CHARS, 'the file is larger than 5 MB: split it into smaller files and import each'),
  /** Columns chosen by hand, field by field; fields left out are mapped by their headers. */
  mapping: z.partialRecord(z.enum(importFields), z.string().max(200).nullable()).optional(),
  /** false: only preview. true: store every new reading, or nothing when any row is refused. */
  store: z.boolean(),
});
export type ReadingImportRequest = z.input<typeof readingImportRequestSchema>;

export const importRowStatuses = ['new', 'unchanged', 'refused'] as const;
export type ImportRowStatus = (typeof importRowStatuses)[number];

/** One row of the file as the import sees it. */
export const importRowSchema = z.object({
  /** Line of the file the row starts on (the header is line 1). */
  line: z.number().int().positive(),
  /** The key it has or would be given; absent when none could be worked out. */
  key: z.string().optional(),
  name: z.string(),
  kind: z.string(),
  unit: z.string(),
  status: z.enum(importRowStatuses),
  /** What stops the row, each on the field (the import's field names) it is about. */
  problems: z.array(z.object({ field: z.string(), message: z.string() })),
  /** The figures as they would be stored, in `unit`. */
  preview: z
    .object({
      kind: z.enum(readingKinds),
      unit: z.string(),
      value: z.string().nullable(),
      passes: z.string().nullable(),
      stops: z.string().nullable(),
      values: z.array(z.string()).nullable(),
    })
    .optional(),
  /** Where it goes: the clip's title and the time in seconds, and whether the moment is new. */
  moment: z.object({ clipTitle: z.string(), atS: z.number(), isNew: z.boolean() }).optional(),
});
export type ImportRow = z.infer<typeof importRowSchema>;

/** Answer of the import: 200 (previewed or stored), or 422 with the same shape when a refused row stopped a store. */
export const readingImportResponseSchema = z.object({
  columns: z.array(z.string()),
  mapping: z.record(z.enum(importFields), z.string().nullable()),
  rows: z.array(importRowSchema),
  counts: z.object({ new: z.number().int().nonnegative(), unchanged: z.number().int().nonnegative(), refused: z.number().int().nonnegative() }),
  stored: z.boolean(),
});
export type ReadingImportResponse = z.infer<typeof readingImportResponseSchema>;
