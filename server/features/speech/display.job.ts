import fsp from 'node:fs/promises';
import os from 'node:os';
import path from 'node:path';
import type { Logger } from 'pino';
import type PgBoss from 'pg-boss';
import type { Config } from '../../config';
import type { Queue } from '../../jobs/queue';
import type { Storage } from '../../storage/storage';
import { Clip } from '../clips/clip.model';
import { playableKey } from '../clips/clips.service';
import { decodeAllTimeoutS } from '../clips/media/limits';
import { displayReaderStatus, readDisplay, type FrameReader } from './display-reader';
import { displayRegionOf, setDisplayState, storeDisplayValues } from './display.service';
import { ensureEvidenceQueue, EXPIRY_CEILING_S } from './listen.job';

/** What a display reading run needs. */
export interface DisplayReadDeps {
  storage: Storage;
  logger: Logger;
  /** ssocr, then tesseract (the default); a test may give its own. */
  reader?: FrameReader;
  /** Whether a reader is installed (the default looks for ssocr and tesseract). */
  unavailableBecause?: () => string | null;
}

export interface DisplayReadJobData {
  clipId: number;
}

/** How long one attempt may run: decoding every frame at its bound, and a second per frame read, plus five minutes. */
export function displayJobExpireSeconds(durationS: number, floorS: number): number {
  const d = Number.isFinite(durationS) && durationS > 0 ? durationS : 0;
  return Math.min(EXPIRY_CEILING_S, Math.max(Math.ceil(floorS), 300 + decodeAllTimeoutS(d) + Math.ceil(d)));
}

/** Puts reading the clip's display on the `clip-display-read` queue (at most one waiting job per clip). */
export async function enqueueDisplayRead(queue: Queue, config: Pick<Config, 'jobs'>, clipId: number, durationS?: number) {
  const name = await ensureEvidenceQueue(queue, config, 'clip-display-read');
  const seconds = durationS ?? (await Clip.findByPk(clipId, { attributes: ['id', 'probe'] }))?.probe?.durationS ?? 0;
  // A new region replaces a waiting job's work, so one job per clip is enough; its singleton key keeps it one.
  return queue.boss.send(name, { clipId } satisfies DisplayReadJobData, {
    singletonKey: `display-${clipId}`,
    expireInSeconds: displayJobExpireSeconds(seconds, config.jobs.expireSeconds),
  });
}

/**
 * Reads the display of one ready clip in the region its builder set: frames out with ffmpeg, digits
 * read by ssocr or tesseract (`readDisplay`), the values stored with the state 'ready'. A region
 * changed while reading is read again by the job its change queued. Failures are thrown so pg-boss
 * retries; the last attempt marks the region 'failed'.
 */
export async function readClipDisplay(deps: DisplayReadDeps, clipId: number, attempt: { retryCount: number; retryLimit: number }, signal?: AbortSignal) {
  const clip = await Clip.findByPk(clipId);
  const region = await displayRegionOf(clipId);
  if (!clip || clip.status !== 'ready' || !region || region.state === 'ready') return;
  const why = (deps.unavailableBecause ?? (() => displayReaderStatus().why))();
  if (why) {
    deps.logger.warn({ clipId, why }, 'no display reader: the display is not read');
    await setDisplayState(clipId, 'unavailable');
    return;
  }
  const frame = { width: clip.probe?.width ?? 0, height: clip.probe?.height ?? 0 };
  if (!clip.probe?.videoCodec || frame.width <= 0 || frame.height <= 0) {
    await storeDisplayValues(clipId, region, []);
    return;
  }
  await setDisplayState(clipId, 'reading', ['pending', 'failed', 'reading']);
  let scratch: string | null = null;
  let source: Awaited<ReturnType<Storage['localCopy']>> | null = null;
  try {
    scratch = await fsp.mkdtemp(path.join(os.tmpdir(), `benchproof-display-${clipId}-`));
    source = await deps.storage.localCopy(playableKey(clip));
    const started = performance.now();
    const container = clip.webCopy && clip.webCopy !== 'original' ? 'mp4' : clip.container;
    const durationS = clip.probe?.durationS ?? 0;
    const { values, frames, fps } = await readDisplay(source.path, {
      region: { x: region.x, y: region.y, width: region.width, height: region.height },
      frame,
      durationS,
      container,
      scratch,
      signal,
      ...(deps.reader ? { reader: deps.reader } : {}),
    });
    if (!(await storeDisplayValues(clipId, region, values))) return;
    deps.logger.info({ clipId, values: values.length, frames, fps, ms: Math.round(performance.now() - started) }, 'clip display read');
  } catch (err) {
    if (signal?.aborted) {
      await setDisplayState(clipId, 'pending', ['reading']);
      throw err;
    }
    if (!(await displayRegionOf(clipId))) return;
    deps.logger.warn({ err, clipId, attempt: attempt.retryCount }, 'reading the clip display failed');
    if (attempt.retryCount >= attempt.retryLimit) {
      await setDisplayState(clipId, 'failed', ['reading', 'pending']);
      return;
    }
    await setDisplayState(clipId, 'pending', ['reading']);
    throw err;
  } finally {
    await source?.release();
    if (scratch) await fsp.rm(scratch, { recursive: true, force: true });
  }
}

/** Starts reading displays on the `clip-display-read` queue, one clip at a time, in the process that processes clips. */
export async function startDisplayWorker(config: Config, queue: Queue, deps: DisplayReadDeps) {
  const name = await ensureEvidenceQueue(queue, config, 'clip-display-read');
  const stopping = new AbortController();
  await queue.boss.work<DisplayReadJobData>(
    name,
    { batchSize: 1, includeMetadata: true, pollingIntervalSeconds: 0.5 },
    async (jobs: PgBoss.JobWithMetadata<DisplayReadJobData>[]) => {
      for (const job of jobs) await readClipDisplay(deps, job.data.clipId, { retryCount: job.retryCount, retryLimit: job.retryLimit }, stopping.signal);
    },
  );
  return {
    async stop() {
      await queue.boss.offWork(name);
      stopping.abort(new Error('the display worker is stopping'));
    },
  };
}
