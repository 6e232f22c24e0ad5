import Papa from 'papaparse';
import type { z } from 'zod';
import {
  importFields,
  mapColumns,
  MAX_IMPORT_ROWS,
  secondsToMs,
  splitValues,
  type ImportField,
  type ImportMapping,
  type ImportRow,
  type ReadingImportResponse,
  type readingImportRequestSchema,
} from '@shared/readings/reading-import.schema';
import { normaliseReadingFigures, type ReadingFigures } from '@shared/readings/reading-figures';
import { readingUnits } from '@shared/measure/record-units';
import { keyFromName, readingInputSchema, readingKinds, uniqueKey } from '@shared/readings/reading.schema';
import { AppError, badRequest } from '../../http/errors';
import { Build, Part } from '../builds/build.model';
import { Clip, Moment } from '../clips/clip.model';
import { Instrument } from '../instruments/instrument.model';
import type { User } from '../users/user.model';
import { Reading } from './reading.model';
import { insertReading, prepareReading, type PreparedReading } from './readings.service';

type ImportRequest = z.output<typeof readingImportRequestSchema>;
type ReadingInput = z.output<typeof readingInputSchema>;
type Problem = { field: string; message: string };

/** What a builder's import may refer to, loaded once for the whole file. */
interface Lookups {
  instruments: Instrument[];
  parts: Part[];
  clips: Clip[];
  /** Existing moments by `clipId|atMs`. */
  moments: Map<string, number>;
  /** The build's readings by key. */
  readings: Map<string, Reading>;
}

/** A row that passed, waiting for the store. */
interface Ready {
  prepared: PreparedReading;
  /** The moment's id, or where the moment still has to be marked. */
  moment: { id: number } | { clipId: number; atMs: number };
}

/** The API's field names in refusals → the import's column fields. */
const fieldOfPath: Record<string, ImportField> = {
  momentId: 'at_s',
  instrumentId: 'instrument',
  partId: 'part',
  temperatureC: 'temperature_c',
  takenOn: 'taken_on',
};
const importFieldOf = (path: string): string => {
  const head = path.split('.')[0] ?? path;
  return fieldOfPath[head] ?? head;
};

/** A cell the export escaped so a spreadsheet would not run it ('=…, '+…, '-…, '@…): the text as it was. */
function unescapeCell(cell: string): string {
  return /^'[=+\-@\t\r]/.test(cell) ? cell.slice(1) : cell;
}

/**
 * The file's rows as cells, each with the line it starts on. Papa parses; a quote-aware scan of
 * the same text finds where each record starts, since a quoted note may span lines.
 */
function parseCsv(text: string): { header: string[]; rows: { line: number; cells: string[] }[] } {
  const parsed = Papa.parse<string[]>(text, { header: false, skipEmptyLines: false, delimiter: '' });
  const quoteError = parsed.errors.find((e) => e.type === 'Quotes');
  if (quoteError) {
    throw badRequest(`The file has a quoted cell that never closes (record ${(quoteError.row ?? 0) + 1}). Save it from the spreadsheet again as CSV.`, [
      { path: 'csv', message: 'a quoted cell never closes' },
    ]);
  }
  // A quote opens a quoted cell only at the start of a cell, as Papa reads it ("" inside is one quote).
  const delimiter = parsed.meta.delimiter;
  const starts: number[] = [1];
  let line = 1;
  let quoted = false;
  let cellStart = true;
  for (let i = 0; i < text.length; i += 1) {
    const c = text[i];
    const newline = c === '\n' || (c === '\r' && text[i + 1] !== '\n');
    if (newline) line += 1;
    if (quoted) {
      if (c === '"' && text[i + 1] === '"') i += 1;
      else if (c === '"') quoted = false;
    } else if (c === '"' && cellStart) {
      quoted = true;
      cellStart = false;
    } else if (newline) {
      starts.push(line);
      cellStart = true;
    } else if (c === delimiter || c === '\r') {
      cellStart = true;
    } else {
      cellStart = false;
    }
  }
  const records = parsed.data.map((cells, i) => ({ line: starts[i] ?? i + 1, cells: cells.map(unescapeCell) }));
  const nonEmpty = records.filter((r) => r.cells.join('').trim() !== '');
  const [header, ...rows] = nonEmpty;
  if (!header) throw badRequest('The file is empty: export the sheet as CSV with a header row, then choose it again.', [{ path: 'csv', message: 'no header row' }]);
  return { header: header.cells.map((h) => h.trim()), rows };
}

/** A decimal written the one way: no leading or trailing zeros ("0.50" and ".5" → "0.5"). */
function canonicalDecimal(text: string): string {
  let t = text.trim().replace(/^\+/, '');
  const negative = t.startsWith('-');
  if (negative) t = t.slice(1);
  const [whole = '', fraction = ''] = t.split('.');
  const w = whole.replace(/^0+(?=\d)/, '') || '0';
  const f = fraction.replace(/0+$/, '');
  const out = f ? `${w}.${f}` : w;
  return negative && out !== '0' ? `-${out}` : out;
}

const sameDecimal = (a: string | null, b: string | null) => (a === null || b === null ? a === b : canonicalDecimal(a) === canonicalDecimal(b));

/** The stored figures equal the figures a row works out to. */
function sameFigures(stored: Reading, kind: string, figures: ReadingFigures): boolean {
  const storedValues = stored.repeatedValues?.map(String) ?? null;
  return (
    stored.kind === kind &&
    stored.unit === figures.unit &&
    sameDecimal(stored.value, figures.value) &&
    sameDecimal(stored.passes, figures.passes) &&
    sameDecimal(stored.stops, figures.stops) &&
    (storedValues === null || figures.values === null
      ? storedValues === figures.values
      : storedValues.length === figures.values.length && storedValues.every((v, i) => sameDecimal(v, figures.values![i]!)))
  );
}

function figuresText(r: Reading): string {
  if (r.kind === 'bracket') return `enters ${r.passes} ${r.unit}, does not enter ${r.stops} ${r.unit}`;
  if (r.kind === 'repeated') return `${(r.repeatedValues ?? []).join(', ')} ${r.unit}`;
  return `${r.value} ${r.unit}`;
}

const lower = (s: string) => s.trim().toLocaleLowerCase('en');

const wordsOf = (s: string) => new Set(lower(s).split(/[^\p{L}\p{N}.]+/u).filter(Boolean));

/** A list of names as a refusal shows it: the first few, quoted, those sharing words with `like` first. */
function listed(names: string[], none: string, like = ''): string {
  if (names.length === 0) return none;
  const wanted = wordsOf(like);
  const shared = (n: string) => [...wordsOf(n)].filter((w) => wanted.has(w)).length;
  const ranked = names.map((n, i) => ({ n, i, score: shared(n) })).sort((a, b) => b.score - a.score || a.i - b.i);
  const shown = ranked.slice(0, 8).map(({ n }) => `"${n}"`).join(', ');
  return names.length > 8 ? `${shown} and ${names.length - 8} more` : shown;
}

/** One by its name, case aside; a problem when there is none or more than one. */
function byName<T>(items: T[], nameOf: (item: T) => string, wanted: string, what: { one: string; yours: string; none: string }): T | string {
  const found = items.filter((i) => lower(nameOf(i)) === lower(wanted));
  if (found.length === 1) return found[0]!;
  if (found.length > 1) return `${found.length} ${what.one}s are named "${wanted}": rename one of them so the file can say which`;
  return `no ${what.one} named "${wanted}"; ${what.yours} ${listed(items.map(nameOf), what.none, wanted)}`;
}

async function loadLookups(build: Build): Promise<Lookups> {
  const [instruments, parts, clips, readings] = await Promise.all([
    Instrument.findAll({ where: { ownerId: build.ownerId }, order: [['id', 'ASC']] }),
    Part.findAll({ where: { buildId: build.id }, order: [['position', 'ASC'], ['id', 'ASC']] }),
    Clip.findAll({ where: { buildId: build.id }, order: [['position', 'ASC'], ['id', 'ASC']] }),
    Reading.findAll({ where: { buildId: build.id } }),
  ]);
  const moments = clips.length ? await Moment.findAll({ where: { clipId: clips.map((c) => c.id) }, order: [['id', 'ASC']] }) : [];
  const momentMap = new Map<string, number>();
  for (const m of moments) if (!momentMap.has(`${m.clipId}|${m.atMs}`)) momentMap.set(`${m.clipId}|${m.atMs}`, m.id);
  return { instruments, parts, clips, moments: momentMap, readings: new Map(readings.map((r) => [r.key, r])) };
}

/**
 * Previews a CSV of readings against the build and, when asked and no row is refused, stores
 * every new reading and the moments they need in one transaction that holds the build row.
 * Rows whose key the build already has with the same figures are left as they are.
 */
export async function importReadings(build: Build, user: User, request: ImportRequest): Promise<{ status: number; body: ReadingImportResponse }> {
  const { header, rows } = parseCsv(request.csv.replace(/^\uFEFF/, ''));
  if (rows.length > MAX_IMPORT_ROWS) {
    throw badRequest(`The file has ${rows.length} rows; import at most ${MAX_IMPORT_ROWS} at a time by splitting it.`, [{ path: 'csv', message: 'too many rows' }]);
  }
  const columns = header.map((h, i) => h || `Column ${i + 1}`);
  for (const [field, column] of Object.entries(request.mapping ?? {})) {
    if (column !== null && column !== undefined && !columns.includes(column)) {
      throw badRequest(`The file has no column "${column}" to read ${field} from. Its columns are ${listed(columns, 'none')}.`, [
        { path: `mapping.${field}`, message: `no column "${column}" in the file` },
      ]);
    }
  }
  const mapping = mapColumns(columns, request.mapping ?? {});
  const index = Object.fromEntries(importFields.map((f) => [f, mapping[f] === null ? -1 : columns.indexOf(mapping[f]!)])) as Record<ImportField, number>;
  const lookups = await loadLookups(build);

  const out: ImportRow[] = [];
  const ready: Ready[] = [];
  const cellOf = (cells: string[]) => (f: ImportField) => (index[f] < 0 ? '' : (cells[index[f]] ?? '').trim());
  const keys = {
    inFile: new Map<string, number>(),
    // Every key the file gives, so a key made from a name never takes one a later row asks for.
    typed: new Set(rows.map((r) => cellOf(r.cells)('key')).filter(Boolean)),
    derived: new Set<string>(),
  };
  for (const row of rows) {
    const result = await importRow(build, lookups, mapping, cellOf(row.cells), row.line, keys);
    out.push(result.row);
    if (result.ready) ready.push(result.ready);
  }

  const counts = { new: 0, unchanged: 0, refused: 0 };
  for (const r of out) counts[r.status] += 1;
  const body = (stored: boolean): ReadingImportResponse => ({ columns, mapping, rows: out, counts, stored });
  if (!request.store) return { status: 200, body: body(false) };
  if (counts.refused > 0) return { status: 422, body: body(false) };

  await Reading.sequelize!.transaction(async (transaction) => {
    // The build row is the lock, as for one reading: keys are allocated while it is held.
    await Build.findByPk(build.id, { transaction, lock: transaction.LOCK.UPDATE });
    const created = new Map<string, number>();
    // Rows with their own key first: a key made from a name is then made free of them all, as previewed.
    const ordered = [...ready.filter((r) => r.prepared.input.key !== undefined), ...ready.filter((r) => r.prepared.input.key === undefined)];
    for (const r of ordered) {
      let momentId: number;
      if ('id' in r.moment) momentId = r.moment.id;
      else {
        const where = `${r.moment.clipId}|${r.moment.atMs}`;
        momentId =
          created.get(where) ??
          (await Moment.create({ clipId: r.moment.clipId, atMs: r.moment.atMs, label: r.prepared.input.name, createdBy: user.id }, { transaction })).id;
        created.set(where, momentId);
      }
      await insertReading(build, user, r.prepared, transaction, momentId);
    }
  });
  return { status: 200, body: body(true) };
}

async function importRow(
  build: Build,
  lookups: Lookups,
  mapping: ImportMapping,
  cell: (f: ImportField) => string,
  line: number,
  keys: { inFile: Map<string, number>; typed: Set<string>; derived: Set<string> },
): Promise<{ row: ImportRow; ready?: Ready }> {
  const problems: Problem[] = [];
  const problem = (field: string, message: string) => problems.push({ field, message: `line ${line}: ${message}` });
  const name = cell('name');
  const key = cell('key');
  const figureCells = { value: cell('value'), passes: cell('passes'), stops: cell('stops'), values: cell('values') };
  // A file without a kind column says it by which figures it fills.
  const kindCell = lower(cell('kind'));
  const kind = kindCell || (figureCells.values ? 'repeated' : figureCells.passes || figureCells.stops ? 'bracket' : 'direct');
  const unitCell = cell('unit');
  const row: ImportRow = { line, name, kind, unit: unitCell, status: 'refused', problems };
  if (key) row.key = key;

  for (const [field, text] of Object.entries(figureCells)) {
    if (/^[=@]/.test(text)) problem(field, `"${text}" is a spreadsheet formula, not a figure: save the sheet with its values (paste as values), then import again`);
  }
  if (key) {
    const earlier = keys.inFile.get(key);
    if (earlier !== undefined) problem('key', `the key "${key}" is also on line ${earlier}: give each row its own key, or leave the key empty to have one made from the name`);
    else keys.inFile.set(key, line);
  }

  const stored = key ? lookups.readings.get(key) : undefined;
  const figureTexts = {
    kind: kind as ReadingInput['kind'],
    ...(unitCell && { unit: unitCell as ReadingInput['unit'] }),
    ...(figureCells.value && { value: figureCells.value }),
    ...(figureCells.passes && { passes: figureCells.passes }),
    ...(figureCells.stops && { stops: figureCells.stops }),
    ...(figureCells.values && { values: splitValues(figureCells.values) }),
  };
  const readable = (readingKinds as readonly string[]).includes(kind) && (!unitCell || (readingUnits as readonly string[]).includes(unitCell));

  // A key the build has: the same figures (read as its own instrument reads them) are left alone, other figures are a clash.
  if (stored && problems.length === 0) {
    const storedInstrument = lookups.instruments.find((i) => i.id === stored.instrumentId);
    const normal = readable && storedInstrument ? normaliseReadingFigures(figureTexts, { unit: storedInstrument.unit, kind: storedInstrument.kind }) : null;
    if (normal?.ok && sameFigures(stored, kind, normal.figures)) {
      row.status = 'unchanged';
      row.unit = normal.figures.unit;
      row.preview = { kind: stored.kind, unit: normal.figures.unit, value: normal.figures.value, passes: normal.figures.passes, stops: normal.figures.stops, values: normal.figures.values };
      return { row };
    }
    problem(
      'key',
      `the build already has a reading "${stored.name}" with the key "${key}" and other figures (${figuresText(stored)}): give this row another key, or leave the key empty to log it as a new reading`,
    );
  }

  // The instrument, by its name in the builder's register.
  let instrument: Instrument | undefined;
  const instrumentName = cell('instrument');
  if (!instrumentName) {
    problem('instrument', mapping.instrument === null ? 'no column names the instrument: choose the column that does in the mapping' : 'name the instrument the reading was taken with');
  } else {
    const found = byName(lookups.instruments, (i) => i.name, instrumentName, { one: 'instrument', yours: 'your instruments are', none: 'you have none in your register yet' });
    if (typeof found === 'string') problem('instrument', found);
    else instrument = found;
  }

  // The moment: a clip by its title (the build's only clip when the cell is empty), and a time in it.
  let clip: Clip | undefined;
  const clipTitle = cell('clip');
  if (!clipTitle) {
    if (lookups.clips.length === 1) clip = lookups.clips[0];
    else problem('clip', `name the clip the reading was taken in; this build's clips are ${listed(lookups.clips.map((c) => c.title), 'none yet: upload the clip first')}`);
  } else {
    const found = byName(lookups.clips, (c) => c.title, clipTitle, { one: 'clip', yours: "this build's clips are", none: 'none yet: upload the clip first' });
    if (typeof found === 'string') problem('clip', found);
    else clip = found;
  }
  let moment: Ready['moment'] | undefined;
  const atText = cell('at_s');
  const atMs = atText ? secondsToMs(atText) : null;
  if (!atText) problem('at_s', 'give the time in the clip, in seconds (e.g. 12.4) or as minutes:seconds (e.g. 1:05.2)');
  else if (atMs === null) problem('at_s', `"${atText}" is not a time in the clip: write seconds (e.g. 12.4) or minutes:seconds (e.g. 1:05.2)`);
  if (clip && atMs !== null) {
    const existing = lookups.moments.get(`${clip.id}|${atMs}`);
    if (existing !== undefined) moment = { id: existing };
    else if (clip.status !== 'ready' || !clip.probe) problem('at_s', `the clip "${clip.title}" is still being processed; import once it is ready, or use a moment already marked`);
    else if (atMs > Math.round(clip.probe.durationS * 1000)) problem('at_s', `${(atMs / 1000).toFixed(3)} s is after the end of "${clip.title}" (${clip.probe.durationS.toFixed(1)} s)`);
    else moment = { clipId: clip.id, atMs };
    if (moment) row.moment = { clipTitle: clip.title, atS: atMs / 1000, isNew: !('id' in moment) };
  }

  // The part, when named.
  let partId: number | null = null;
  const partName = cell('part');
  if (partName) {
    const found = byName(lookups.parts, (p) => p.name, partName, { one: 'part', yours: "this build's parts are", none: 'none: add the part to the build first' });
    if (typeof found === 'string') problem('part', found);
    else partId = found.id;
  }

  // The rest as the create route takes it; its schema says what is wrong with each cell.
  const temperatureText = cell('temperature_c');
  const temperatureC = temperatureText ? Number(temperatureText.replace(/\s*°?\s*C$/i, '').replace('−', '-')) : null;
  const draft: Record<string, unknown> = {
    ...figureTexts,
    momentId: moment && 'id' in moment ? moment.id : 1,
    instrumentId: instrument?.id ?? 1,
    partId,
    name,
    ...(key && { key }),
    temperatureC: temperatureText && !Number.isFinite(temperatureC) ? temperatureText : temperatureC,
    material: cell('material') || null,
    note: cell('note'),
    ...(cell('taken_on') && { takenOn: cell('taken_on') }),
  };
  const parsed = readingInputSchema.safeParse(draft);
  if (!parsed.success) {
    for (const issue of parsed.error.issues) problem(importFieldOf(issue.path.map(String).join('.')), issue.message);
  }
  if (problems.length > 0 || !parsed.success || !instrument || !moment) return { row: dedupe(row) };

  let prepared: PreparedReading;
  try {
    prepared = await prepareReading(build, parsed.data, { momentChecked: true, instrument });
  } catch (err) {
    if (!(err instanceof AppError) || err.status !== 400) throw err;
    for (const d of err.details) problem(importFieldOf(d.path ?? 'csv'), d.message);
    if (problems.length === 0) problem('csv', err.message);
    return { row: dedupe(row) };
  }
  const { figures } = prepared;
  row.status = 'new';
  row.unit = figures.unit;
  row.preview = { kind: parsed.data.kind, unit: figures.unit, value: figures.value, passes: figures.passes, stops: figures.stops, values: figures.values };
  if (key) row.key = key;
  else {
    // The key the store will derive (the same rule: the name's key, made free of the build's and the file's).
    row.key = uniqueKey(keyFromName(name), [...lookups.readings.keys(), ...keys.typed, ...keys.derived]);
    keys.derived.add(row.key);
  }
  return { row, ready: { prepared, moment } };
}

/** The same sentence once per row (a refusal can come from the schema and the checks alike). */
function dedupe(row: ImportRow): ImportRow {
  const seen = new Set<string>();
  row.problems = row.problems.filter((p) => (seen.has(p.message) ? false : (seen.add(p.message), true)));
  return row;
}
