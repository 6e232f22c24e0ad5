import { QueryTypes, type Transaction } from 'sequelize';
import { applyCorrections, spansOverlap } from '@shared/speech/caption-corrections';
import type { CaptionCorrection as CaptionCorrectionDto, CaptionCorrectionBody, ClipWord as ClipWordDto } from '@shared/speech/speech.schema';
import { badRequest, conflict, notFound } from '../../http/errors';
import type { Clip } from '../clips/clip.model';
import type { User } from '../users/user.model';
import { CaptionCorrection } from './corrections.model';

const db = () => CaptionCorrection.sequelize!;

/** A correction as the API gives it. */
export function correctionDto(c: CaptionCorrection): CaptionCorrectionDto {
  return { id: c.id, startMs: c.startMs, endMs: c.endMs, text: c.text, correctedBy: c.correctedBy, updatedAt: c.updatedAt.toISOString() };
}

/** The clip's corrections in time order. */
export async function listCorrections(clipId: number): Promise<CaptionCorrection[]> {
  return CaptionCorrection.findAll({ where: { clipId }, order: [['startMs', 'ASC'], ['id', 'ASC']] });
}

/**
 * The clip's words with its builder's corrections applied (`applyCorrections`), oldest
 * correction first, so were two ever to overlap the newer would win.
 */
export async function withCorrections(clipId: number, words: readonly ClipWordDto[]): Promise<ClipWordDto[]> {
  const corrections = await CaptionCorrection.findAll({
    where: { clipId },
    attributes: ['startMs', 'endMs', 'text'],
    order: [['updatedAt', 'ASC'], ['id', 'ASC']],
  });
  return applyCorrections(words, corrections);
}

/**
 * Stores the builder's words for a span of the clip. The span must lie within the clip (its
 * probed duration); corrections it overlaps are replaced, in the same transaction, which holds
 * the clip's row so two saves one after the other leave spans that do not overlap.
 */
export async function createCorrection(clip: Clip, user: User, body: CaptionCorrectionBody): Promise<CaptionCorrection> {
  if (clip.status !== 'ready' || !clip.probe) {
    throw conflict('The clip is still being processed. Correct its captions once it is ready.', 'clip_not_ready');
  }
  const durationMs = Math.round(clip.probe.durationS * 1000);
  if (body.endMs > durationMs) {
    throw badRequest(`The span runs past the end of the clip (${clip.probe.durationS.toFixed(1)} s). Choose a span within the clip.`, [
      { path: 'endMs', message: `after the end of the clip (${durationMs} ms)` },
    ]);
  }
  return db().transaction(async (transaction: Transaction) => {
    const [held] = await db().query('SELECT id FROM clips WHERE id = :clipId FOR UPDATE', {
      type: QueryTypes.SELECT,
      replacements: { clipId: clip.id },
      transaction,
    });
    if (!held) throw notFound('There is no clip with that id.');
    const existing = await CaptionCorrection.findAll({ where: { clipId: clip.id }, attributes: ['id', 'startMs', 'endMs'], transaction });
    const replaced = existing.filter((c) => spansOverlap(c, body)).map((c) => c.id);
    if (replaced.length > 0) await CaptionCorrection.destroy({ where: { id: replaced }, transaction });
    return CaptionCorrection.create({ clipId: clip.id, startMs: body.startMs, endMs: body.endMs, text: body.text, correctedBy: user.id }, { transaction });
  });
}

/** Removes one of the clip's corrections, so the words heard there are shown again; another clip's id is not found. */
export async function removeCorrection(clip: Pick<Clip, 'id'>, correctionId: number): Promise<void> {
  const removed = await CaptionCorrection.destroy({ where: { id: correctionId, clipId: clip.id } });
  if (removed === 0) throw notFound('This clip has no caption correction with that id.');
}
