import crypto from 'node:crypto';
import fsp from 'node:fs/promises';
import path from 'node:path';
import { ForeignKeyConstraintError, Op, type Transaction } from 'sequelize';
import type { Clip as ClipDto, ClipPatch, Moment as MomentDto } from '@shared/clips/clip.schema';
import { AppError, badRequest, conflict, notFound, unauthorized } from '../../http/errors';
import type { Storage } from '../../storage/storage';
import { Build } from '../builds/build.model';
import { buildForOwner, buildForViewer, type OwnerAction } from '../builds/builds.service';
import { ZeroCheck } from '../instruments/instrument.model';
import { Reading } from '../readings/reading.model';
import type { User } from '../users/user.model';
import { Clip, Moment } from './clip.model';
import { probeVideo, MediaRejected } from './media/probe';
import { sniffContainer } from './media/sniff';

/** Storage keys of one clip's files, all under its generated prefix. */
export function clipKeys(clip: Pick<Clip, 'storagePrefix'>) {
  const base = `clips/${clip.storagePrefix}`;
  return {
    base,
    original: `${base}/original`,
    web: `${base}/web.mp4`,
    poster: `${base}/poster.jpg`,
    thumbnails: `${base}/thumbnails.jpg`,
    frame: (atMs: number) => `${base}/frames/${atMs}.jpg`,
  };
}

/** The content type a clip's playable file is served with. */
export function playableContentType(clip: Clip): string {
  if (clip.webCopy && clip.webCopy !== 'original') return 'video/mp4';
  // MOV is served as video/mp4: browsers that play it only accept that type for it.
  return clip.container === 'webm' ? 'video/webm' : 'video/mp4';
}

/** The key of the file browsers play: the web copy, or the original when it plays as it is. */
export function playableKey(clip: Clip): string {
  const keys = clipKeys(clip);
  return clip.webCopy && clip.webCopy !== 'original' ? keys.web : keys.original;
}

export async function toClipDto(clip: Clip, momentCount?: number): Promise<ClipDto> {
  const ready = clip.status === 'ready';
  const api = `/api/clips/${clip.id}`;
  return {
    id: clip.id,
    buildId: clip.buildId,
    title: clip.title,
    position: clip.position,
    status: clip.status,
    progress: clip.progress,
    failureReason: clip.failureReason ?? null,
    originalName: clip.originalName,
    sizeBytes: Number(clip.sizeBytes),
    probe: clip.probe ?? null,
    webCopy: clip.webCopy ?? null,
    trimInS: clip.trimInMs == null ? null : clip.trimInMs / 1000,
    trimOutS: clip.trimOutMs == null ? null : clip.trimOutMs / 1000,
    thumbnails: clip.thumbnails ?? null,
    videoUrl: ready ? `${api}/video` : null,
    posterUrl: ready ? `${api}/poster` : null,
    thumbnailsUrl: ready && clip.thumbnails ? `${api}/thumbnails` : null,
    chaptersUrl: `${api}/chapters.vtt`,
    momentCount: momentCount ?? (await Moment.count({ where: { clipId: clip.id } })),
    createdAt: clip.createdAt.toISOString(),
  };
}

/** A clip the user may see (its builder, moderators, admins), with 404 for anything else. */
export async function clipForViewer(clipId: number, user: User | undefined): Promise<Clip> {
  if (!user) throw unauthorized();
  const clip = await Clip.findByPk(clipId);
  if (!clip) throw notFound('There is no clip with that id.');
  await buildForViewer(clip.buildId, user).catch(() => {
    throw notFound('There is no clip with that id.');
  });
  return clip;
}

/** A clip the user may act on: the build's builder; an admin too when taking it down. */
export async function clipForOwner(clipId: number, user: User | undefined, action: OwnerAction = 'change'): Promise<Clip> {
  const clip = await clipForViewer(clipId, user);
  await buildForOwner(clip.buildId, user, action);
  return clip;
}

export async function listClips(buildId: number): Promise<ClipDto[]> {
  const clips = await Clip.findAll({ where: { buildId }, order: [['position', 'ASC'], ['id', 'ASC']] });
  const counts = await momentCounts(clips.map((c) => c.id));
  return Promise.all(clips.map((c) => toClipDto(c, counts.get(c.id) ?? 0)));
}

async function momentCounts(clipIds: number[]) {
  const rows = (await Moment.count({ where: { clipId: clipIds }, group: ['clipId'] })) as unknown as {
    clipId: number;
    count: number;
  }[];
  return new Map(rows.map((r) => [r.clipId, Number(r.count)]));
}

/** The refusal of a file larger than a clip may be (413), for the one-shot and the resumable upload alike. */
export function tooLargeError(max: number): AppError {
  const gib = max / 1024 ** 3;
  const size = gib >= 1 ? `${gib.toFixed(gib % 1 ? 1 : 0)} GiB` : `${Math.round(max / 1024 ** 2)} MiB`;
  return new AppError(413, 'too_large', `The file is larger than the ${size} a clip may be. Split the recording or lower its bitrate.`);
}

/** What multer (or a finished resumable upload) handed over: a file in the scratch folder, not yet trusted. */
export interface IncomingFile {
  path: string;
  originalname: string;
  size: number;
}

/**
 * Checks an uploaded file's real content and files it: magic bytes first (the name and the
 * browser's type are ignored), then ffprobe. A refused file is deleted before the error leaves,
 * so nothing stays behind. The original is stored read-only under a generated name.
 */
export async function acceptUpload(
  deps: { storage: Storage; maxSeconds: number; clipsPerBuild: number },
  buildId: number,
  file: IncomingFile,
  title: string | undefined,
): Promise<Clip> {
  try {
    if (file.size === 0) throw new AppError(400, 'empty_file', 'The file is empty (0 bytes). Choose the video file again.');
    const head = Buffer.alloc(4096);
    const fh = await fsp.open(file.path, 'r');
    const { bytesRead } = await fh.read(head, 0, head.length, 0).finally(() => fh.close());
    const container = sniffContainer(head.subarray(0, bytesRead));
    if (!container) {
      throw new AppError(415, 'not_a_video', 'This file is not a video Benchproof can read. Upload the clip as recorded (MP4, MOV, MKV, WebM, AVI…).');
    }
    let probe;
    try {
      probe = await probeVideo(file.path, { maxSeconds: deps.maxSeconds });
    } catch (err) {
      if (err instanceof MediaRejected) throw new AppError(422, err.code, err.message);
      throw err;
    }
    const storagePrefix = crypto.randomUUID();
    const clip = await Clip.sequelize!.transaction(async (transaction) => {
      // The build row is the lock: parallel uploads to one build count and number one at a time.
      await Build.findByPk(buildId, { transaction, lock: transaction.LOCK.UPDATE });
      const count = await Clip.count({ where: { buildId }, transaction });
      if (count >= deps.clipsPerBuild) {
        throw conflict(`This build already has ${count} clips, the most one build can hold. Remove a clip first.`, 'too_many_clips');
      }
      const last = (await Clip.max('position', { where: { buildId }, transaction })) as number | null;
      return Clip.create(
        {
          buildId,
          title: (title?.trim() || path.parse(file.originalname).name || 'Clip').slice(0, 160),
          position: (last ?? -1) + 1,
          originalName: file.originalname.slice(0, 255),
          sizeBytes: file.size,
          container,
          storagePrefix,
          probe,
          status: 'uploaded',
        },
        { transaction },
      );
    });
    try {
      await deps.storage.putFile(clipKeys(clip).original, file.path, { contentType: 'application/octet-stream', readOnly: true });
    } catch (err) {
      await clip.destroy();
      throw err;
    }
    return clip;
  } finally {
    // Moved into storage on success; on any refusal, gone.
    await fsp.rm(file.path, { force: true });
  }
}

export async function patchClip(clip: Clip, patch: ClipPatch): Promise<ClipDto> {
  const inMs = patch.trimInS === undefined ? clip.trimInMs : patch.trimInS === null ? null : Math.round(patch.trimInS * 1000);
  const outMs = patch.trimOutS === undefined ? clip.trimOutMs : patch.trimOutS === null ? null : Math.round(patch.trimOutS * 1000);
  const durationMs = clip.probe ? Math.round(clip.probe.durationS * 1000) : null;
  if (durationMs !== null && ((inMs ?? 0) >= durationMs || (outMs ?? 0) > durationMs + 1)) {
    throw badRequest(`Trim points must lie inside the clip (0 to ${(durationMs / 1000).toFixed(1)} s).`, [
      { path: (inMs ?? 0) >= durationMs ? 'trimInS' : 'trimOutS', message: 'outside the clip' },
    ]);
  }
  if (inMs != null && outMs != null && outMs <= inMs) {
    throw badRequest('The out point must come after the in point.', [{ path: 'trimOutS', message: 'before the in point' }]);
  }
  clip.set({ ...(patch.title !== undefined && { title: patch.title }), trimInMs: inMs, trimOutMs: outMs });
  await clip.save();
  return toClipDto(clip);
}

/** Puts the build's clips in the given order; the list must name every clip exactly once. */
export async function reorderClips(buildId: number, clipIds: number[]): Promise<ClipDto[]> {
  await Clip.sequelize!.transaction(async (transaction) => {
    const clips = await Clip.findAll({ where: { buildId }, transaction, lock: transaction.LOCK.UPDATE });
    const have = new Set(clips.map((c) => c.id));
    if (clipIds.length !== have.size || new Set(clipIds).size !== clipIds.length || clipIds.some((id) => !have.has(id))) {
      throw badRequest('Send every clip of this build exactly once, in the new order.', [{ path: 'clipIds', message: 'not the clips of this build' }]);
    }
    for (const [position, id] of clipIds.entries()) {
      await Clip.update({ position }, { where: { id, buildId }, transaction });
    }
  });
  return listClips(buildId);
}

/** How many readings and zero checks are tied to these moments. */
async function momentUses(momentIds: number[], transaction?: Transaction): Promise<{ readings: number; zeroChecks: number }> {
  if (momentIds.length === 0) return { readings: 0, zeroChecks: 0 };
  const [readings, zeroChecks] = await Promise.all([
    Reading.count({ where: { momentId: momentIds }, transaction }),
    ZeroCheck.count({ where: { momentId: momentIds }, transaction }),
  ]);
  return { readings, zeroChecks };
}

/** "One reading and 2 zero checks are", for a refusal. */
function usesText(uses: { readings: number; zeroChecks: number }): string {
  const parts = [
    uses.readings ? (uses.readings === 1 ? 'one reading' : `${uses.readings} readings`) : '',
    uses.zeroChecks ? (uses.zeroChecks === 1 ? 'one zero check' : `${uses.zeroChecks} zero checks`) : '',
  ].filter(Boolean);
  const text = parts.join(' and ');
  return `${text.charAt(0).toUpperCase()}${text.slice(1)} ${uses.readings + uses.zeroChecks === 1 ? 'is' : 'are'}`;
}

/**
 * Deletes a clip, its unused moments and its files; refused while a reading or a zero check is
 * tied to one of its moments (the footage is their evidence). Stories whose cover was one of
 * the moments lose the cover (the key is SET NULL).
 */
export async function deleteClip(storage: Storage, clip: Clip): Promise<void> {
  if (clip.status === 'processing') {
    throw conflict('This clip is being processed right now. Delete it when it is ready or has failed.', 'clip_busy');
  }
  try {
    await Clip.sequelize!.transaction(async (transaction) => {
      const moments = await Moment.findAll({ attributes: ['id'], where: { clipId: clip.id }, transaction });
      const uses = await momentUses(moments.map((m) => m.id), transaction);
      if (uses.readings || uses.zeroChecks) {
        throw conflict(
          `${usesText(uses)} tied to moments of this clip, and the footage is their evidence. Remove those first; moments nothing uses go with the clip.`,
          'clip_in_use',
        );
      }
      await Moment.destroy({ where: { clipId: clip.id }, transaction });
      await clip.destroy({ transaction });
    });
  } catch (err) {
    // A reading was tied to one of its moments between the count and the delete.
    if (err instanceof ForeignKeyConstraintError) throw conflict('A reading or zero check is tied to a moment of this clip now. Remove it first.', 'clip_in_use');
    throw err;
  }
  await storage.deletePrefix(clipKeys(clip).base);
}

/** Deletes a moment, refused while a reading or a zero check is tied to it (409 `moment_in_use`). */
export async function deleteMoment(moment: Moment): Promise<void> {
  const uses = await momentUses([moment.id]);
  if (uses.readings || uses.zeroChecks) {
    throw conflict(`${usesText(uses)} tied to this moment, and its still is the evidence. Remove or move ${uses.readings + uses.zeroChecks === 1 ? 'it' : 'them'} first.`, 'moment_in_use');
  }
  try {
    await moment.destroy();
  } catch (err) {
    if (err instanceof ForeignKeyConstraintError) throw conflict('A reading or zero check is tied to this moment now. Remove it first.', 'moment_in_use');
    throw err;
  }
}

export function momentDto(m: Moment): MomentDto {
  return {
    id: m.id,
    clipId: m.clipId,
    atMs: m.atMs,
    label: m.label,
    frameUrl: `/api/clips/${m.clipId}/frame?t=${(m.atMs / 1000).toFixed(3)}`,
    createdAt: m.createdAt.toISOString(),
  };
}

function assertInsideClip(clip: Clip, atMs: number) {
  if (clip.status !== 'ready' || !clip.probe) {
    throw conflict('The clip is still being processed. Mark moments once it is ready.', 'clip_not_ready');
  }
  if (atMs > Math.round(clip.probe.durationS * 1000)) {
    throw badRequest(`The moment lies after the end of the clip (${clip.probe.durationS.toFixed(1)} s).`, [{ path: 'atMs', message: 'after the end of the clip' }]);
  }
}

export async function listMoments(clip: Clip): Promise<MomentDto[]> {
  const rows = await Moment.findAll({ where: { clipId: clip.id }, order: [['atMs', 'ASC'], ['id', 'ASC']] });
  return rows.map(momentDto);
}

export async function addMoment(clip: Clip, user: User, input: { atMs: number; label: string }): Promise<MomentDto> {
  assertInsideClip(clip, input.atMs);
  const m = await Moment.create({ clipId: clip.id, atMs: input.atMs, label: input.label, createdBy: user.id });
  return momentDto(m);
}

/** A moment the user may change (through its clip's build). */
export async function momentForOwner(momentId: number, user: User | undefined, action: OwnerAction = 'change') {
  if (!user) throw unauthorized();
  const moment = await Moment.findByPk(momentId);
  if (!moment) throw notFound('There is no moment with that id.');
  const clip = await clipForOwner(moment.clipId, user, action).catch((err) => {
    throw err instanceof AppError && err.status === 404 ? notFound('There is no moment with that id.') : err;
  });
  return { moment, clip };
}

export async function patchMoment(clip: Clip, moment: Moment, patch: { atMs?: number; label?: string }) {
  if (patch.atMs !== undefined) assertInsideClip(clip, patch.atMs);
  moment.set(patch);
  await moment.save();
  return momentDto(moment);
}

/** Cue list for the chapters track, one per moment. */
export async function momentsForChapters(clipId: number) {
  return Moment.findAll({ where: { clipId, atMs: { [Op.gte]: 0 } }, order: [['atMs', 'ASC']] });
}
