import crypto from 'node:crypto';
import fsp from 'node:fs/promises';
import path from 'node:path';
import { AppError, badRequest } from '../../http/errors';
import { limiter } from '../../http/rate-limit';
import type { Storage } from '../../storage/storage';
import { QueryTypes } from 'sequelize';
import { Moment, type Clip } from './clip.model';
import { clipKeys, playableKey } from './clips.service';
import { MediaCommandFailed } from './media/ffmpeg-run';
import { extractFrame } from './media/stills';

/** Each new millisecond asked for makes and stores a still: one address may ask this often. */
export function evidenceStillLimiter() {
  return limiter({ windowMs: 60_000, limit: 240, message: 'Too many evidence stills asked for from here. Wait a minute and try again.' });
}

/**
 * The storage key of a clip's evidence still at a millisecond, cut the first time anyone asks.
 * The builder's, the moderator's and the public view share it: one still per clip and
 * millisecond, from the file browsers play, so it matches the player. A time past the end of the
 * clip is a 400; a time ffmpeg finds no picture at is a 422 `no_frame`.
 *
 * Stills at the clip's moments and at the times a publication cites are kept; the others
 * (a builder or moderator looking around the footage) are a cache of at most `keep` per clip,
 * the oldest removed first when a new one is cut.
 */
export async function evidenceStillKey(storage: Storage, clip: Clip, atMs: number, keep: number): Promise<string> {
  const durationMs = Math.round((clip.probe?.durationS ?? 0) * 1000);
  if (atMs > durationMs) {
    throw badRequest(`The clip is ${(durationMs / 1000).toFixed(3)} s long; ask for a time inside it.`, [{ path: 't', message: 'after the end of the clip' }]);
  }
  const key = clipKeys(clip).frame(atMs);
  if (await storage.stat(key)) return key;
  const source = await storage.localCopy(playableKey(clip));
  const out = path.join(storage.scratchDir(), `frame-${crypto.randomUUID()}.jpg`);
  try {
    await extractFrame(source.path, atMs / 1000, out).catch((err: unknown) => {
      throw err instanceof MediaCommandFailed ? new AppError(422, 'no_frame', err.message) : err;
    });
    await storage.putFile(key, out, { contentType: 'image/jpeg' });
  } finally {
    await source.release();
    await fsp.rm(out, { force: true });
  }
  await evictStills(storage, clip, keep, atMs);
  return key;
}

/**
 * Removes the oldest of a clip's stills beyond `keep`, never one at a moment of the clip or at a
 * time a publication (current or past) cites; the one just cut (`justCutMs`) goes last.
 */
export async function evictStills(storage: Storage, clip: Clip, keep: number, justCutMs?: number): Promise<string[]> {
  const framesPrefix = `${clipKeys(clip).base}/frames`;
  const stills = (await storage.list(framesPrefix))
    .map((o) => ({ ...o, atMs: Number(/\/(\d+)\.jpg$/.exec(o.key)?.[1] ?? Number.NaN) }))
    .filter((o) => Number.isInteger(o.atMs));
  if (stills.length <= keep) return [];
  const pinned = await pinnedStillTimes(clip.id);
  // Oldest first; the still just cut counts as the newest whatever the clock's resolution says.
  const age = (o: { atMs: number; modified: Date }) => (o.atMs === justCutMs ? Number.MAX_SAFE_INTEGER : o.modified.getTime());
  const loose = stills.filter((o) => !pinned.has(o.atMs)).sort((a, b) => age(a) - age(b) || a.atMs - b.atMs);
  const gone = loose.slice(0, Math.max(0, loose.length - keep));
  for (const o of gone) await storage.delete(o.key);
  return gone.map((o) => o.key);
}

/** The times of a clip's moments and every time any publication's evidence cites in it, ms. */
async function pinnedStillTimes(clipId: number): Promise<Set<number>> {
  const moments = await Moment.findAll({ where: { clipId }, attributes: ['atMs'] });
  const sequelize = Moment.sequelize!;
  const cited = await sequelize.query<{ at_ms: number }>(
    `SELECT DISTINCT (r->>'atMs')::int AS at_ms
       FROM story_publications p
       CROSS JOIN LATERAL jsonb_array_elements(p.evidence->'readings') r
      WHERE (p.evidence->'readings') @> CAST(:cites AS jsonb) AND (r->>'clipId')::int = :clipId AND r->>'atMs' IS NOT NULL`,
    { type: QueryTypes.SELECT, replacements: { clipId, cites: JSON.stringify([{ clipId }]) } },
  );
  return new Set([...moments.map((m) => m.atMs), ...cited.map((c) => Number(c.at_ms))]);
}
