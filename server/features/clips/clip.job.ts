import crypto from 'node:crypto';
import fsp from 'node:fs/promises';
import path from 'node:path';
import { Op } from 'sequelize';
import type { Logger } from 'pino';
import type PgBoss from 'pg-boss';
import type { Config } from '../../config';
import type { Queue } from '../../jobs/queue';
import type { Storage } from '../../storage/storage';
import { Clip } from './clip.model';
import { clipKeys } from './clips.service';
import { MediaCommandFailed } from './media/ffmpeg-run';
import { clipJobBoundS } from './media/limits';
import { MediaRejected } from './media/probe';
import { planWebCopy } from './media/plan';
import { makeWebCopy } from './media/transcode';
import { makePoster, makeThumbnailStrip } from './media/stills';
import { enqueueDisplayRead, startDisplayWorker } from '../speech/display.job';
import { displayRegionOf } from '../speech/display.service';
import { enqueueListen, startListenWorker } from '../speech/listen.job';

export interface ClipJobDeps {
  storage: Storage;
  logger: Logger;
  /** Test hook: called at each stage; a throw simulates a crash there, a promise a stall. */
  faultAt?: (stage: 'start' | 'web-copy' | 'stills', clipId: number, attempt: number) => void | Promise<void>;
  /** How often a running job touches its row; a third of the stall time at most (set by startClipWorker). */
  heartbeatMs?: number;
  /** Called once a clip is ready (startClipWorker queues listening to it); a failure is logged, never the clip's. */
  onReady?: (clipId: number, durationS: number) => Promise<unknown>;
}

export interface ClipJobData {
  clipId: number;
}

/** Bounds of a clip job's expiry, seconds: pg-boss refuses 24 h or more. */
export const CLIP_JOB_EXPIRY_CEILING_S = 23 * 3600;

/**
 * How long pg-boss lets one attempt at a clip run before it takes the worker for dead and
 * hands the job out again: the longest the media commands may take for a clip of `durationS`
 * seconds (clipJobBoundS), never less than the queue's own setting (`floorS`,
 * JOB_EXPIRE_SECONDS) and never more than CLIP_JOB_EXPIRY_CEILING_S. A shorter expiry would
 * start a second run beside a long transcode that is still working.
 */
export function clipJobExpireSeconds(durationS: number, floorS: number): number {
  const wanted = Number.isFinite(durationS) && durationS > 0 ? clipJobBoundS(durationS) : 0;
  return Math.min(CLIP_JOB_EXPIRY_CEILING_S, Math.max(Math.ceil(floorS), wanted));
}

/**
 * Puts a clip's processing on the queue (at most one waiting job per clip), with an expiry
 * derived from its duration (read from its row when not given).
 */
export async function enqueueClip(queue: Queue, clipId: number, durationS?: number) {
  const seconds = durationS ?? (await Clip.findByPk(clipId, { attributes: ['id', 'probe'] }))?.probe?.durationS ?? 0;
  const settings = (await queue.boss.getQueue(queue.names.clipProcess)) as { expireInSeconds?: number } | null;
  const expireInSeconds = clipJobExpireSeconds(seconds, settings?.expireInSeconds ?? 0);
  return queue.boss.send(queue.names.clipProcess, { clipId } satisfies ClipJobData, { singletonKey: `clip-${clipId}`, expireInSeconds });
}

/**
 * Takes the clip for this run: status processing, one more attempt. The attempt number is the
 * run's token: every later write of the run names it, so a run that a newer one has replaced
 * (it stalled, was expired and handed out again) can no longer change the clip. Null when the
 * clip is gone or already ready.
 */
async function claim(clipId: number): Promise<number | null> {
  const [rows] = (await Clip.sequelize!.query(
    `UPDATE clips SET status = 'processing', progress = 0, failure_reason = NULL, attempts = attempts + 1, updated_at = now()
     WHERE id = :id AND status <> 'ready' RETURNING attempts`,
    { replacements: { id: clipId } },
  )) as [{ attempts: number }[], unknown];
  return rows[0]?.attempts ?? null;
}

/**
 * Processes one clip: web copy when the original will not play in browsers, poster, thumbnail
 * strip. Idempotent: every output goes to a scratch name and is moved in whole, so running it
 * again after a crash just does the work again. A file ffmpeg rejects fails at once; other
 * errors are thrown so pg-boss retries, and the last attempt marks the clip failed with a reason.
 * Every write after the claim holds only while the clip is still processing under this run's
 * token: a run another has replaced stops at its next step and changes nothing.
 */
export async function processClip(deps: ClipJobDeps, clipId: number, attempt: { retryCount: number; retryLimit: number }) {
  const clip = await Clip.findByPk(clipId);
  if (!clip || clip.status === 'ready') return;
  const token = await claim(clip.id);
  if (token == null) return;
  const ours = { id: clip.id, status: 'processing' as const, attempts: token };
  const write = async (values: Parameters<typeof Clip.update>[0]) => (await Clip.update(values, { where: ours }))[0] > 0;
  const stillOurs = async () => (await Clip.count({ where: ours })) > 0;
  const last = attempt.retryCount >= attempt.retryLimit;
  const keys = clipKeys(clip);
  const scratch = path.join(deps.storage.scratchDir(), `job-${clip.id}-${crypto.randomUUID()}`);
  let original: Awaited<ReturnType<Storage['localCopy']>> | null = null;
  let webCopy: Awaited<ReturnType<Storage['localCopy']>> | null = null;
  // A heartbeat for the whole job (not only the transcode), so the recovery sweep never takes a
  // slow but living job for a dead one.
  const heartbeat = setInterval(() => {
    Clip.sequelize!.query(`UPDATE clips SET updated_at = now() WHERE id = :id AND status = 'processing' AND attempts = :token`, {
      replacements: { id: clip.id, token },
    }).catch((err: unknown) => deps.logger.warn({ err, clipId: clip.id }, 'heartbeat not written'));
  }, deps.heartbeatMs ?? 5000);
  heartbeat.unref();
  const superseded = () => deps.logger.warn({ clipId: clip.id, token }, 'a newer run took over this clip; this one stops without changing it');
  try {
    await fsp.mkdir(scratch, { recursive: true });
    original = await deps.storage.localCopy(keys.original);
    await deps.faultAt?.('start', clip.id, attempt.retryCount);
    const probe = clip.probe!;
    const plan = await planWebCopy(probe, clip.container, original.path);

    let source = original.path;
    let sourceContainer = clip.container;
    if (plan !== 'original') {
      const out = path.join(scratch, 'web.mp4');
      let lastWrite = 0;
      await makeWebCopy(original.path, out, plan, {
        durationS: probe.durationS,
        container: clip.container,
        onProgress: (percent) => {
          // Also the heartbeat that tells recovery this clip is alive; at most once a second.
          const now = Date.now();
          if (now - lastWrite < 1000) return;
          lastWrite = now;
          write({ progress: Math.min(90, Math.round(percent * 0.9)) }).catch((err: unknown) =>
            deps.logger.warn({ err, clipId: clip.id }, 'progress heartbeat not written'),
          );
        },
      });
      await deps.faultAt?.('web-copy', clip.id, attempt.retryCount);
      if (!(await stillOurs())) return superseded();
      await deps.storage.putFile(keys.web, out, { contentType: 'video/mp4' });
      webCopy = await deps.storage.localCopy(keys.web);
      source = webCopy.path;
      sourceContainer = 'mp4';
    }
    if (!(await write({ progress: 92 }))) return superseded();
    const posterOut = path.join(scratch, 'poster.jpg');
    // The first frame: the picture the player shows at 0:00.0, before anything plays.
    await makePoster(source, posterOut, 0, { container: sourceContainer });
    if (!(await stillOurs())) return superseded();
    await deps.storage.putFile(keys.poster, posterOut, { contentType: 'image/jpeg' });
    const stripOut = path.join(scratch, 'thumbnails.jpg');
    const strip = await makeThumbnailStrip(source, stripOut, {
      count: Math.max(1, Math.min(60, Math.ceil(probe.durationS))),
      tileWidth: 160,
      container: sourceContainer,
    });
    await deps.faultAt?.('stills', clip.id, attempt.retryCount);
    if (!(await stillOurs())) return superseded();
    await deps.storage.putFile(keys.thumbnails, stripOut, { contentType: 'image/jpeg' });
    if (!(await write({ status: 'ready', progress: 100, webCopy: plan, thumbnails: strip, failureReason: null }))) {
      // The clip was deleted meanwhile: remove what this job wrote. Replaced by a newer run: leave its files alone.
      if ((await Clip.count({ where: { id: clip.id } })) === 0) await deps.storage.deletePrefix(keys.base);
      else superseded();
      return;
    }
    deps.logger.info({ clipId: clip.id, plan }, 'clip ready');
    await deps.onReady?.(clip.id, probe.durationS).catch((err: unknown) => deps.logger.warn({ err, clipId: clip.id }, 'listening to the clip not queued'));
  } catch (err) {
    const permanent = err instanceof MediaRejected;
    // ffmpeg's own complaint is worth showing; anything else (SQL, paths, storage) stays in the log.
    const why = err instanceof MediaCommandFailed ? err.message : 'an internal error (the details are in the server log).';
    const reason = permanent ? err.message : `Processing failed${last ? '' : ', retrying'}: ${why}`.slice(0, 500);
    deps.logger.warn({ err, clipId: clip.id, attempt: attempt.retryCount }, 'clip processing failed');
    if (permanent || last) {
      // The original stays; the builder can delete the clip or upload it again.
      if (!(await write({ status: 'failed', failureReason: permanent ? reason : `${reason} The original is kept.` }))) superseded();
      return;
    }
    // A replaced run has nothing to retry: the newer one owns the clip.
    if (!(await write({ status: 'uploaded', failureReason: reason }))) return superseded();
    throw err;
  } finally {
    clearInterval(heartbeat);
    await original?.release();
    await webCopy?.release();
    await fsp.rm(scratch, { recursive: true, force: true });
  }
}

/** True when the clip has a job queued or waiting to be retried. */
async function hasWaitingJob(queue: Queue, clipId: number): Promise<boolean> {
  const [rows] = await Clip.sequelize!.query(
    `SELECT 1 FROM pgboss.job WHERE name = :name AND singleton_key = :key AND state IN ('created', 'retry') LIMIT 1`,
    { replacements: { name: queue.names.clipProcess, key: `clip-${clipId}` } },
  );
  return rows.length > 0;
}

/**
 * Starts the clip worker on the queue, and re-queues clips that a crash left behind: any clip
 * still uploaded/processing whose row has not changed for `stallSeconds` (processing writes a
 * heartbeat every second).
 */
export async function startClipWorker(config: Config, queue: Queue, given: ClipJobDeps) {
  // Listening to ready clips and reading their displays run in this process too, each on its own queue.
  const listen = await startListenWorker(config, queue, { storage: given.storage, logger: given.logger });
  const display = await startDisplayWorker(config, queue, { storage: given.storage, logger: given.logger });
  // Three heartbeats per stall period, so a busy machine never looks like a dead worker.
  const deps: ClipJobDeps = {
    onReady: async (clipId, durationS) => {
      await enqueueListen(queue, config, clipId, durationS);
      // A display region set while the clip was being processed is read now.
      if (await displayRegionOf(clipId)) await enqueueDisplayRead(queue, config, clipId, durationS);
    },
    ...given,
    heartbeatMs: Math.min(5000, Math.floor((config.jobs.stallSeconds * 1000) / 3)),
  };
  await queue.boss.work<ClipJobData>(
    queue.names.clipProcess,
    { batchSize: 1, includeMetadata: true, pollingIntervalSeconds: 0.5 },
    async (jobs: PgBoss.JobWithMetadata<ClipJobData>[]) => {
      for (const job of jobs) {
        await processClip(deps, job.data.clipId, { retryCount: job.retryCount, retryLimit: job.retryLimit });
      }
    },
  );
  const recover = async () => {
    const stale = await Clip.findAll({
      where: {
        status: { [Op.in]: ['uploaded', 'processing'] },
        updatedAt: { [Op.lt]: new Date(Date.now() - config.jobs.stallSeconds * 1000) },
      },
      limit: 100,
    });
    for (const clip of stale) {
      // A clip waiting for its retry (pg-boss backs off between attempts) is not lost: leave it to the queue.
      if (await hasWaitingJob(queue, clip.id)) continue;
      deps.logger.warn({ clipId: clip.id }, 're-queueing a clip left unfinished');
      clip.changed('updatedAt', true); // touch, so the next sweep does not pick it again at once
      await clip.save();
      await enqueueClip(queue, clip.id, clip.probe?.durationS);
    }
    return stale.length;
  };
  await recover();
  const timer = setInterval(() => void recover().catch((err) => deps.logger.error({ err }, 'recovery sweep failed')), config.jobs.stallSeconds * 500);
  timer.unref();
  return {
    recover,
    async stop() {
      clearInterval(timer);
      await queue.boss.offWork(queue.names.clipProcess);
      await listen.stop();
      await display.stop();
    },
  };
}
