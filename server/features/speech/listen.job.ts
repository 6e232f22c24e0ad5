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
import { runFfmpeg } from '../clips/media/ffmpeg-run';
import { decodeAllTimeoutS } from '../clips/media/limits';
import { inputFormatArgs } from '../clips/media/sniff';
import { recognizeTimeoutS, recognizerFromConfig, type Recognizer } from './recognizer';
import { listeningOf, setListeningState, storeClipWords } from './speech.service';

/** What a listening run needs. */
export interface ListenDeps {
  storage: Storage;
  logger: Logger;
  speech: Config['speech'];
  /** pocketsphinx or SPEECH_COMMAND's program (from the config when not given). */
  recognizer?: Recognizer;
}

export interface ListenJobData {
  clipId: number;
}

/** A clip evidence queue's name (`clip-listen`, `clip-display-read`), with the instance prefix (as `queueNames` does for the others). */
export function evidenceQueueName(config: Pick<Config, 'jobs'>, base: 'clip-listen' | 'clip-display-read'): string {
  return `${config.jobs.queuePrefix ? `${config.jobs.queuePrefix}-` : ''}${base}`;
}

/** The `clip-listen` queue's name. */
export function listenQueueName(config: Pick<Config, 'jobs'>): string {
  return evidenceQueueName(config, 'clip-listen');
}

/** pg-boss refuses an expiry of 24 h or more (as for clip jobs). */
export const EXPIRY_CEILING_S = 23 * 3600;

/**
 * How long pg-boss lets one listening attempt run before taking its worker for dead: taking the
 * sound out and recognizing it, each at its bound, plus five minutes for storage; never less than
 * the queue's own setting, never a day.
 */
export function listenJobExpireSeconds(durationS: number, floorS: number): number {
  const d = Number.isFinite(durationS) && durationS > 0 ? durationS : 0;
  return Math.min(EXPIRY_CEILING_S, Math.max(Math.ceil(floorS), 300 + decodeAllTimeoutS(d) + recognizeTimeoutS(d)));
}

const made = new WeakMap<PgBoss, Set<string>>();

/** Creates an evidence queue (once per process, boss and name), with the clip queue's retries. */
export async function ensureEvidenceQueue(queue: Queue, config: Pick<Config, 'jobs'>, base: 'clip-listen' | 'clip-display-read'): Promise<string> {
  const name = evidenceQueueName(config, base);
  const names = made.get(queue.boss) ?? new Set<string>();
  made.set(queue.boss, names);
  if (names.has(name)) return name;
  // 'short': at most one waiting job per clip, so asking again is harmless.
  const options = {
    name,
    policy: 'short' as const,
    retryLimit: config.jobs.retryLimit,
    retryDelay: 2,
    retryBackoff: true,
    expireInSeconds: config.jobs.expireSeconds,
  };
  await queue.boss.createQueue(name, options);
  await queue.boss.updateQueue(name, options);
  names.add(name);
  return name;
}

/** Puts listening to a clip on the `clip-listen` queue (at most one waiting job per clip). */
export async function enqueueListen(queue: Queue, config: Pick<Config, 'jobs'>, clipId: number, durationS?: number) {
  const name = await ensureEvidenceQueue(queue, config, 'clip-listen');
  const seconds = durationS ?? (await Clip.findByPk(clipId, { attributes: ['id', 'probe'] }))?.probe?.durationS ?? 0;
  return queue.boss.send(name, { clipId } satisfies ListenJobData, {
    singletonKey: `listen-${clipId}`,
    expireInSeconds: listenJobExpireSeconds(seconds, config.jobs.expireSeconds),
  });
}

/**
 * The clip's sound as the recognizers want it: its first sound track, mixed to one channel,
 * resampled to 16 kHz, 16-bit PCM in a plain WAV (44-byte header: no metadata chunk, which
 * pocketsphinx would read as sound).
 */
export async function extractSpeechWav(input: string, output: string, options: { container?: string; durationS: number; signal?: AbortSignal }) {
  const what = 'take the sound out of the clip';
  const format = await inputFormatArgs(input, options.container, what);
  await runFfmpeg(
    [
      '-v', 'error', '-nostats',
      ...format, '-i', input,
      '-map', '0:a:0', '-vn', '-sn', '-dn', '-map_metadata', '-1',
      '-ac', '1', '-ar', '16000', '-c:a', 'pcm_s16le',
      '-fflags', '+bitexact', '-flags:a', '+bitexact',
      '-f', 'wav', '-y', output,
    ],
    { what, signal: options.signal, limits: { timeoutS: decodeAllTimeoutS(options.durationS) } },
  );
}

/**
 * Listens to one ready clip: takes its sound out with ffmpeg, runs the recognizer and stores the
 * words (replacing any earlier ones) with the state 'ready', in one transaction. A clip without
 * sound is 'ready' with no words; without a recognizer it is 'unavailable'. Failures are thrown
 * so pg-boss retries; the last attempt marks the clip 'failed' (the log has why).
 */
export async function listenToClip(deps: ListenDeps, clipId: number, attempt: { retryCount: number; retryLimit: number }, signal?: AbortSignal) {
  const clip = await Clip.findByPk(clipId);
  if (!clip || clip.status !== 'ready') return;
  // Already heard (a second request raced the first): nothing to do.
  if ((await listeningOf(clip.id))?.state === 'ready') return;
  const recognizer = deps.recognizer ?? recognizerFromConfig(deps.speech);
  const why = deps.speech.enabled ? recognizer.unavailableBecause() : 'SPEECH=off';
  if (why) {
    deps.logger.warn({ clipId: clip.id, why }, 'no speech recognizer: the clip is not listened to');
    await setListeningState(clip.id, 'unavailable');
    return;
  }
  const durationS = clip.probe?.durationS ?? 0;
  if (!clip.probe?.audioCodec) {
    await storeClipWords(clip.id, []);
    return;
  }
  await setListeningState(clip.id, 'listening');
  let scratch: string | null = null;
  let source: Awaited<ReturnType<Storage['localCopy']>> | null = null;
  try {
    // The WAV (about 115 MB an hour) is never stored: it goes to the system's temporary folder,
    // not the media store's scratch area, which holds only what becomes media.
    scratch = await fsp.mkdtemp(path.join(os.tmpdir(), `benchproof-listen-${clip.id}-`));
    source = await deps.storage.localCopy(playableKey(clip));
    const wav = path.join(scratch, 'sound.wav');
    const started = performance.now();
    const container = clip.webCopy && clip.webCopy !== 'original' ? 'mp4' : clip.container;
    await extractSpeechWav(source.path, wav, { container, durationS, signal });
    const extracted = performance.now();
    const { words } = await recognizer.recognize(wav, { durationS, signal });
    const recognized = performance.now();
    if (!(await storeClipWords(clip.id, words))) return;
    deps.logger.info(
      {
        clipId: clip.id,
        recognizer: recognizer.name,
        words: words.length,
        durationS,
        extractMs: Math.round(extracted - started),
        recognizeMs: Math.round(recognized - extracted),
      },
      'clip listened to',
    );
  } catch (err) {
    if (signal?.aborted) {
      // The worker is stopping: the clip waits for the job's next attempt.
      await setListeningState(clip.id, 'pending', ['listening']);
      throw err;
    }
    if ((await Clip.count({ where: { id: clip.id } })) === 0) return;
    const last = attempt.retryCount >= attempt.retryLimit;
    deps.logger.warn({ err, clipId: clip.id, attempt: attempt.retryCount }, 'listening to the clip failed');
    if (last) {
      await setListeningState(clip.id, 'failed', ['listening', 'pending']);
      return;
    }
    await setListeningState(clip.id, 'pending', ['listening']);
    throw err;
  } finally {
    await source?.release();
    if (scratch) await fsp.rm(scratch, { recursive: true, force: true });
  }
}

/**
 * Starts listening to clips on the `clip-listen` queue, one at a time (recognition takes a core),
 * in the process that processes clips. `stop()` stops taking jobs and kills the recognition under
 * way (pg-boss hands its job out again once it expires).
 */
export async function startListenWorker(config: Config, queue: Queue, given: Omit<ListenDeps, 'speech'>) {
  const deps: ListenDeps = { ...given, speech: config.speech };
  const name = await ensureEvidenceQueue(queue, config, 'clip-listen');
  const stopping = new AbortController();
  await queue.boss.work<ListenJobData>(
    name,
    { batchSize: 1, includeMetadata: true, pollingIntervalSeconds: 0.5 },
    async (jobs: PgBoss.JobWithMetadata<ListenJobData>[]) => {
      for (const job of jobs) await listenToClip(deps, job.data.clipId, { retryCount: job.retryCount, retryLimit: job.retryLimit }, stopping.signal);
    },
  );
  return {
    async stop() {
      await queue.boss.offWork(name);
      stopping.abort(new Error('the listening worker is stopping'));
    },
  };
}
