import { Op, QueryTypes, type Transaction } from 'sequelize';
import type { AnyUnit } from '@shared/measure/quantities';
import type { DisplayRegion, Suggestion } from '@shared/speech/speech.schema';
import type { Clip } from '../clips/clip.model';
import type { User } from '../users/user.model';
import type { DisplayReading } from './display-reader';
import { DisplayRegionRow, DisplayValue, ProposalDismissal } from './speech.model';

/** Where reading a clip's display stands. */
export type DisplayState = 'pending' | 'reading' | 'ready' | 'failed' | 'unavailable';

const db = () => DisplayRegionRow.sequelize!;

/** The clip's display region and where reading it stands, or null when none was set. */
export async function displayRegionOf(clipId: number): Promise<DisplayRegionRow | null> {
  return DisplayRegionRow.findByPk(clipId);
}

/** The region as the API gives it: fractions of the frame, with the unit the display shows. */
export function regionDto(row: DisplayRegionRow): DisplayRegion & { unit: AnyUnit } {
  return { x: row.x, y: row.y, width: row.width, height: row.height, unit: row.unit };
}

/**
 * Sets (or replaces) the clip's display region: what was read off the old region is dropped with
 * the dismissals of its suggestions, and reading starts again ('pending').
 */
export async function setDisplayRegion(clip: Pick<Clip, 'id'>, user: Pick<User, 'id'>, region: DisplayRegion, unit: AnyUnit): Promise<void> {
  await db().transaction(async (transaction: Transaction) => {
    await forgetWhatWasRead(clip.id, transaction);
    await DisplayRegionRow.upsert(
      { clipId: clip.id, ...region, unit, state: 'pending', setBy: user.id, setAt: new Date(), readAt: null },
      { transaction },
    );
  });
}

/** Sets where reading stands; `from` limits the change to regions in one of those states. True when it changed. */
export async function setDisplayState(clipId: number, state: DisplayState, from?: readonly DisplayState[]): Promise<boolean> {
  const rows = await db().query(
    `UPDATE clip_display_regions SET state = :state
      WHERE clip_id = :clipId${from ? ' AND state IN (:from)' : ''} RETURNING clip_id`,
    { type: QueryTypes.SELECT, replacements: { clipId, state, from: from ?? [] } },
  );
  return rows.length > 0;
}

/**
 * Replaces the values read off the clip's display and marks it read ('ready', now), holding the
 * region's row; `region` must still be the one read (a region set meanwhile wins). False when the
 * region is gone or changed.
 */
export async function storeDisplayValues(clipId: number, region: Pick<DisplayRegionRow, 'setAt'>, values: readonly DisplayReading[]): Promise<boolean> {
  return db().transaction(async (transaction: Transaction) => {
    const [row] = await db().query<{ set_at: Date }>('SELECT set_at FROM clip_display_regions WHERE clip_id = :clipId FOR UPDATE', {
      type: QueryTypes.SELECT,
      replacements: { clipId },
      transaction,
    });
    if (!row || row.set_at.getTime() !== region.setAt.getTime()) return false;
    await DisplayValue.destroy({ where: { clipId }, transaction });
    await DisplayValue.bulkCreate(
      values.map((v, position) => ({ clipId, position, startMs: v.startMs, endMs: v.endMs, text: v.text.slice(0, 40), confidence: v.confidence })),
      { transaction },
    );
    await db().query(`UPDATE clip_display_regions SET state = 'ready', read_at = now() WHERE clip_id = :clipId`, {
      replacements: { clipId },
      transaction,
    });
    return true;
  });
}

/** The values read off the clip's display, in time order. */
export async function displayValuesOf(clipId: number): Promise<DisplayReading[]> {
  const rows = await DisplayValue.findAll({ where: { clipId }, order: [['position', 'ASC']] });
  return rows.map((r) => ({ startMs: r.startMs, endMs: r.endMs, text: r.text, confidence: Math.min(1, Math.max(0, Number(r.confidence))) }));
}

/** The values read as suggestions ("d<atMs>-<n>"), each a direct reading in the region's unit. */
export function displaySuggestions(values: readonly DisplayReading[], unit: AnyUnit): Suggestion[] {
  const seen = new Map<number, number>();
  return values.map((v) => {
    const n = seen.get(v.startMs) ?? 0;
    seen.set(v.startMs, n + 1);
    return {
      kind: 'direct' as const,
      id: `d${v.startMs}-${n}`,
      atMs: v.startMs,
      endMs: Math.max(v.startMs, v.endMs),
      source: 'display' as const,
      text: v.text,
      value: v.text,
      feel: null,
      unit,
      confidence: v.confidence,
      unitHeard: false,
      note: 'read off the display; the unit is the one set with its region',
      dismissed: false,
      logged: false,
    };
  });
}

/** Removes the clip's display region with what was read off it and the dismissals of its suggestions. */
export async function removeDisplayRegion(clip: Pick<Clip, 'id'>): Promise<void> {
  await db().transaction(async (transaction: Transaction) => {
    await forgetWhatWasRead(clip.id, transaction);
    await DisplayRegionRow.destroy({ where: { clipId: clip.id }, transaction });
  });
}

/** Drops what was read off the clip's display and the dismissals of its suggestions ("d…" ids). */
async function forgetWhatWasRead(clipId: number, transaction: Transaction) {
  await DisplayValue.destroy({ where: { clipId }, transaction });
  await ProposalDismissal.destroy({ where: { clipId, proposalId: { [Op.like]: 'd%' } }, transaction });
}
