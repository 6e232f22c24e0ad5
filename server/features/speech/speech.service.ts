import { QueryTypes, type Transaction } from 'sequelize';
import { quantityOf, unitsOf, type AnyUnit } from '@shared/measure/quantities';
import type { ClipWord as ClipWordDto, ListeningState, Suggestion } from '@shared/speech/speech.schema';
import { findSpokenFigures, type FindSpokenFiguresOptions } from '@shared/speech/spoken-figures';
import { notFound } from '../../http/errors';
import { Build } from '../builds/build.model';
import { Instrument } from '../instruments/instrument.model';
import { Clip } from '../clips/clip.model';
import type { User } from '../users/user.model';
import { cleanWord } from './captions';
import { withCorrections } from './corrections.service';
import { displayRegionOf, displaySuggestions, displayValuesOf } from './display.service';
import { loggedReadingFor, type ClipReadingFigures } from './proposal-match';
import type { RecognizedWord } from './recognizer';
import { ClipWord, ProposalDismissal } from './speech.model';

const db = () => ClipWord.sequelize!;

/** Where listening to a clip stands, and when it last finished; null when the clip is gone. */
export async function listeningOf(clipId: number): Promise<{ state: ListeningState; listenedAt: Date | null } | null> {
  const [row] = await db().query<{ listening_state: ListeningState; listened_at: Date | null }>(
    'SELECT listening_state, listened_at FROM clips WHERE id = :clipId',
    { type: QueryTypes.SELECT, replacements: { clipId } },
  );
  return row ? { state: row.listening_state, listenedAt: row.listened_at } : null;
}

/**
 * Sets a clip's listening state; `from` limits the change to clips in one of those states (so a
 * late duplicate cannot undo a finished run). True when the row changed.
 */
export async function setListeningState(clipId: number, state: ListeningState, from?: readonly ListeningState[]): Promise<boolean> {
  const rows = await db().query(
    `UPDATE clips SET listening_state = :state
      WHERE id = :clipId${from ? ' AND listening_state IN (:from)' : ''} RETURNING id`,
    { type: QueryTypes.SELECT, replacements: { clipId, state, from: from ?? [] } },
  );
  return rows.length > 0;
}

const MAX_WORD_LENGTH = 100;
const INSERT_CHUNK = 1000;

/** A recognizer's word as we can store it: no control characters (PostgreSQL refuses NUL), at most 100 characters. */
function storable(w: RecognizedWord): RecognizedWord | null {
  // eslint-disable-next-line no-control-regex -- removing them is the point
  const word = w.word.replace(/[\u0000-\u001f\u007f]/g, '').trim().slice(0, MAX_WORD_LENGTH);
  if (word === '' || !Number.isFinite(w.startMs) || !Number.isFinite(w.endMs)) return null;
  const startMs = Math.min(2_147_483_647, Math.max(0, Math.round(w.startMs)));
  const endMs = Math.min(2_147_483_647, Math.max(startMs, Math.round(w.endMs)));
  return { word, startMs, endMs, confidence: Number.isFinite(w.confidence) ? w.confidence : 0 };
}

/**
 * Replaces a clip's words with `words` and marks it listened ('ready', now), in one transaction
 * that holds the clip's row, so two runs one after the other leave one run's words, never both.
 * False when the clip is gone.
 */
export async function storeClipWords(clipId: number, words: readonly RecognizedWord[]): Promise<boolean> {
  const rows = words.map(storable).filter((w): w is RecognizedWord => w !== null);
  return db().transaction(async (transaction: Transaction) => {
    const [clip] = await db().query('SELECT id FROM clips WHERE id = :clipId FOR UPDATE', {
      type: QueryTypes.SELECT,
      replacements: { clipId },
      transaction,
    });
    if (!clip) return false;
    await ClipWord.destroy({ where: { clipId }, transaction });
    for (let i = 0; i < rows.length; i += INSERT_CHUNK) {
      await ClipWord.bulkCreate(
        rows.slice(i, i + INSERT_CHUNK).map((w, j) => ({ clipId, position: i + j, ...w })),
        { transaction },
      );
    }
    await db().query(`UPDATE clips SET listening_state = 'ready', listened_at = now() WHERE id = :clipId`, {
      replacements: { clipId },
      transaction,
    });
    return true;
  });
}

/**
 * A clip's words as readers get them: markers removed, alternates' numbers dropped, confidence
 * within 0…1, and its builder's caption corrections applied (`withCorrections`: their words in
 * place of those heard in their spans), so captions, transcript, suggestions and the review's
 * second witness all read the corrected words.
 */
export async function wordsForReaders(clipId: number): Promise<ClipWordDto[]> {
  const rows = await ClipWord.findAll({ where: { clipId }, order: [['position', 'ASC']] });
  const words: ClipWordDto[] = [];
  for (const row of rows) {
    const word = cleanWord(row.word);
    if (word === null) continue;
    words.push({ word, startMs: row.startMs, endMs: row.endMs, confidence: Math.min(1, Math.max(0, Number(row.confidence))) });
  }
  return withCorrections(clipId, words);
}

/**
 * What the clip's builder measures with, for reading speech: every unit of the quantities their
 * instruments (in service) show, so a micrometer in inches admits "thou" and a torque wrench lets
 * bare "pounds" mean lbf·ft; and the unit of a decimal said without one, when their instruments
 * agree on one (or their length instruments do). An empty register sets nothing: every figure heard is proposed.
 */
export async function spokenFigureOptions(clip: Pick<Clip, 'buildId'>): Promise<FindSpokenFiguresOptions> {
  const build = await Build.findByPk(clip.buildId, { attributes: ['id', 'ownerId'] });
  if (!build) return {};
  const instruments = await Instrument.findAll({ where: { ownerId: build.ownerId, retired: false }, attributes: ['unit'] });
  const own = [...new Set(instruments.map((i) => i.unit as AnyUnit))];
  if (own.length === 0) return {};
  const units = [...new Set(own.flatMap((u) => unitsOf(quantityOf(u))))];
  const lengths = own.filter((u) => quantityOf(u) === 'length');
  const defaultUnit = own.length === 1 ? own[0] : lengths.length === 1 ? lengths[0] : undefined;
  return { units, ...(defaultUnit ? { defaultUnit } : {}) };
}

/**
 * The readings heard in the words (`findSpokenFigures`), in the order said, each with an id that
 * stays the same while the words do: its start in ms and its place among figures starting then.
 */
export function suggestionsFromWords(words: readonly ClipWordDto[], opts: FindSpokenFiguresOptions): Suggestion[] {
  const timed = words.map((w) => ({ word: w.word, start: w.startMs / 1000, end: w.endMs / 1000, confidence: w.confidence }));
  const seen = new Map<number, number>();
  return findSpokenFigures(timed, opts).map((f) => {
    const atMs = Math.round(f.start * 1000);
    const n = seen.get(atMs) ?? 0;
    seen.set(atMs, n + 1);
    const common = {
      id: `${atMs}-${n}`,
      atMs,
      endMs: Math.max(atMs, Math.round(f.end * 1000)),
      source: 'speech' as const,
      text: f.words,
      unit: f.unit,
      confidence: f.confidence,
      unitHeard: f.unitHeard,
      ...(f.note ? { note: f.note } : {}),
      dismissed: false,
      logged: false,
    };
    return f.kind === 'value'
      ? { kind: 'direct' as const, value: f.value, feel: f.feel, ...common }
      : { kind: 'bracket' as const, passes: f.passes, stops: f.stops, ...common };
  });
}

/** The readings logged at moments of the clip, with their instruments' resolutions. */
async function clipReadingFigures(clipId: number): Promise<ClipReadingFigures[]> {
  const rows = await db().query<{
    id: number;
    key: string;
    kind: ClipReadingFigures['kind'];
    unit: ClipReadingFigures['unit'];
    value: string | null;
    passes: string | null;
    stops: string | null;
    repeated_values: string[] | null;
    at_ms: number;
    resolution: string;
    resolution_unit: ClipReadingFigures['unit'];
  }>(
    `SELECT r.id, r.key, r.kind, r.unit, r.value, r.passes, r.stops, r.repeated_values, m.at_ms,
            i.resolution, i.unit AS resolution_unit
       FROM readings r
       JOIN moments m ON m.id = r.moment_id
       JOIN instruments i ON i.id = r.instrument_id
      WHERE m.clip_id = :clipId`,
    { type: QueryTypes.SELECT, replacements: { clipId } },
  );
  return rows.map((r) => ({
    id: r.id,
    key: r.key,
    kind: r.kind,
    unit: r.unit,
    value: r.value,
    passes: r.passes,
    stops: r.stops,
    repeatedValues: r.repeated_values,
    atMs: r.at_ms,
    resolution: r.resolution,
    resolutionUnit: r.resolution_unit,
  }));
}

/**
 * The clip's suggestions as its suggestions route answers them, in time order: what its words
 * propose with its builder's units and what was read off its display, each marked `dismissed`
 * when the builder set it aside and `logged` (with the reading's key) when a reading near its
 * time already holds its figure (`loggedReadingFor`).
 */
export async function suggestionsForClip(clip: Pick<Clip, 'id' | 'buildId'>): Promise<Suggestion[]> {
  const [words, opts, dismissals, readings, region, shown] = await Promise.all([
    wordsForReaders(clip.id),
    spokenFigureOptions(clip),
    ProposalDismissal.findAll({ where: { clipId: clip.id }, attributes: ['proposalId'] }),
    clipReadingFigures(clip.id),
    displayRegionOf(clip.id),
    displayValuesOf(clip.id),
  ]);
  const dismissed = new Set(dismissals.map((d) => d.proposalId));
  const all = [...suggestionsFromWords(words, opts), ...(region ? displaySuggestions(shown, region.unit) : [])];
  all.sort((a, b) => a.atMs - b.atMs || (a.source === b.source ? 0 : a.source === 'speech' ? -1 : 1));
  return all.map((p) => {
    const reading = loggedReadingFor(p, readings);
    return {
      ...p,
      dismissed: dismissed.has(p.id),
      ...(reading ? { logged: true, readingKey: reading.key, readingId: reading.id } : {}),
    };
  });
}

/**
 * Sets a suggestion of the clip aside for its builder (again is harmless). Only a suggestion the
 * clip's words or display make now can be dismissed: any other id is not found.
 */
export async function dismissSuggestion(clip: Pick<Clip, 'id' | 'buildId'>, user: User, id: string): Promise<void> {
  const exists = id.startsWith('d')
    ? await displaySuggestionExists(clip.id, id)
    : suggestionsFromWords(await wordsForReaders(clip.id), await spokenFigureOptions(clip)).some((p) => p.id === id);
  if (!exists) throw notFound('This clip has no suggested reading with that id; its words or display may have been read again.');
  await ProposalDismissal.bulkCreate([{ clipId: clip.id, proposalId: id, dismissedBy: user.id }], { ignoreDuplicates: true });
}

async function displaySuggestionExists(clipId: number, id: string): Promise<boolean> {
  const region = await displayRegionOf(clipId);
  return region !== null && displaySuggestions(await displayValuesOf(clipId), region.unit).some((p) => p.id === id);
}

/** Brings a dismissed suggestion back (harmless when it was not dismissed, or is gone). */
export async function undismissSuggestion(clip: Pick<Clip, 'id'>, id: string): Promise<void> {
  await ProposalDismissal.destroy({ where: { clipId: clip.id, proposalId: id } });
}
