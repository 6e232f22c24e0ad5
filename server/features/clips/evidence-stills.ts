import crypto from 'node:crypto';
import fsp from 'node:fs/promises';
import path from 'node:path';
import { AppError, badRequest } from '../../http/errors';
import { limiter } from '../../http/rate-limit';
import type { Storage } from '../../storage/storage';
import type { Clip } from './clip.model';
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
 */
export async function evidenceStillKey(storage: Storage, clip: Clip, atMs: number): Promise<string> {
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
  return key;
}
