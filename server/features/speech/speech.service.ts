import { QueryTypes, type Transaction } from 'sequelize';
import { quantityOf, unitsOf, type AnyUnit } from '@shared/measure/quantities';
import type { ClipWord as ClipWordDto, ListeningState, SpeechProposal } from '@shared/speech/speech.schema';
import { findSpokenFigures, type FindSpokenFiguresOptions } from '@shared/speech/spoken-figures';
import { Build } from '../builds/build.model';
import { Instrument } from '../instruments/instrument.model';
import { Clip } from '../clips/clip.model';
import { cleanWord } from './captions';
import type { RecognizedWord } from './recognizer';
import { ClipWord } from './speech.model';

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

/** A clip's words as readers get them: markers removed, alternates' numbers dropped, confidence within 0…1. */
export async function wordsForReaders(clipId: number): Promise<ClipWordDto[]> {
  const rows = await ClipWord.findAll({ where: { clipId }, order: [['position', 'ASC']] });
  const words: ClipWordDto[] = [];
  for (const row of rows) {
    const word = cleanWord(row.word);
    if (word === null) continue;
    words.push({ word, startMs: row.startMs, endMs: row.endMs, confidence: Math.min(1, Math.max(0, Number(row.confidence))) });
  }
  return words;
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
export function proposalsFromWords(words: readonly ClipWordDto[], opts: FindSpokenFiguresOptions): SpeechProposal[] {
  const timed = words.map((w) => ({ word: w.word, start: w.startMs / 1000, end: w.endMs / 1000, confidence: w.confidence }));
  const seen = new Map<number, number>();
  return findSpokenFigures(timed, opts).map((f) => {
    const startMs = Math.round(f.start * 1000);
    const n = seen.get(startMs) ?? 0;
    seen.set(startMs, n + 1);
    const common = {
      id: `${startMs}-${n}`,
      unit: f.unit,
      startMs,
      endMs: Math.max(startMs, Math.round(f.end * 1000)),
      confidence: f.confidence,
      heard: f.words,
      unitHeard: f.unitHeard,
      ...(f.note ? { note: f.note } : {}),
    };
    return f.kind === 'value'
      ? { kind: 'value' as const, value: f.value, feel: f.feel, ...common }
      : { kind: 'bracket' as const, passes: f.passes, stops: f.stops, ...common };
  });
}
