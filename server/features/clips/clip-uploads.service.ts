import crypto from 'node:crypto';
import fsp from 'node:fs/promises';
import path from 'node:path';
import { Readable } from 'node:stream';
import type { NextFunction, Request as ExpressRequest, Response as ExpressResponse } from 'express';
import { Metadata, Server as TusServer, TUS_RESUMABLE } from '@tus/server';
import type { Logger } from 'pino';
import { Op } from 'sequelize';
import { uploadClipIdHeader } from '@shared/clips/clip.schema';
import { isTextWithoutNul, noNulMessage } from '@shared/http/db-values.schema';
import type { Config } from '../../config';
import { AppError, badRequest, conflict, notFound } from '../../http/errors';
import type { Queue } from '../../jobs/queue';
import type { Storage } from '../../storage/storage';
import { buildForOwner } from '../builds/builds.service';
import type { User } from '../users/user.model';
import { enqueueClip } from './clip.job';
import { Clip } from './clip.model';
import { ClipUpload } from './clip-upload.model';
import { acceptUpload, tooLargeError } from './clips.service';
import { uploadIdPattern, uploadStoreFor, type UploadStore } from './upload-store';

export interface ResumableUploadDeps {
  config: Config;
  storage: Storage;
  queue: Queue | null;
  logger: Logger;
}

/** What a checked creation request asks for. */
interface Creation {
  buildId: number;
  ownerId: number;
  fileName: string;
  size: number;
}

/** What our code hands the tus handler for one request, and what it hands back. */
interface RequestContext {
  creation?: Creation;
  /** The upload the request names (HEAD, PATCH, DELETE), as the store knows it. */
  storeId?: string;
  /** Set when the request created an upload row. */
  createdId?: string;
  /** An error of ours (a refusal, a storage or database failure) thrown inside a tus hook. */
  error?: unknown;
}

/** A "finishing" upload untouched this long is taken to be from a process that died. */
const FINISHING_STALE_MS = 30 * 60_000;

/** Hop-by-hop headers that belong to this connection, not to the request handed on. */
const hopByHop = new Set(['connection', 'keep-alive', 'transfer-encoding', 'upgrade', 'proxy-connection', 'te', 'trailer']);

const uploadGone = () =>
  notFound('There is no upload at this address. It may have been cancelled or have expired; start the upload again.');
const uploadBusy = () =>
  new AppError(423, 'upload_busy', 'This upload is busy: its file is being checked, or another request is sending to it. Ask where it stands again in a few seconds.');
const uploadExpired = (hours: string) =>
  new AppError(410, 'upload_expired', `This upload was not finished within ${hours} and has been removed. Start the upload again.`);

function hoursText(seconds: number): string {
  if (seconds % 3600 === 0) return `${seconds / 3600} h`;
  if (seconds % 60 === 0) return `${seconds / 60} min`;
  return `${seconds} s`;
}

/**
 * Resumable clip uploads (tus 1.0.0 with the creation, expiration and termination extensions),
 * on @tus/server with the file store (local driver) or the S3 store. Our routes decide who may
 * do what and check the request first; tus then keeps the bytes and the offsets. When the last
 * byte arrives the file goes through `acceptUpload`, exactly as a one-shot upload does, and
 * becomes a clip, or is refused with the same words and removed. Unfinished uploads expire and a
 * periodic sweep removes them; every error answers in the API's one error contract.
 */
export function createResumableUploads(deps: ResumableUploadDeps) {
  const { config, storage, queue, logger } = deps;
  const expireMs = config.uploads.expireSeconds * 1000;
  const store: UploadStore = uploadStoreFor(config.storage, storage.scratchDir(), expireMs);
  const incomingDir = path.join(storage.scratchDir(), 'incoming');
  const contexts = new WeakMap<Request, RequestContext>();
  const finishing = new Map<string, Promise<Clip>>();

  const tus = new TusServer({
    // Unused for URLs (generateUrl builds them from the request); required by the library.
    path: '/api/builds/uploads',
    datastore: store.datastore,
    maxSize: config.uploads.maxBytes,
    // Same origin only: no CORS headers at all.
    allowedOrigins: [],
    namingFunction: () => store.storeId(crypto.randomBytes(16).toString('hex')),
    generateUrl: (req, { id }) => `${new URL(req.url).pathname.replace(/\/+$/, '')}/${store.urlId(id)}`,
    getFileIdFromRequest: (_req, lastPath) => (lastPath && uploadIdPattern.test(lastPath) ? store.storeId(lastPath) : undefined),
    onUploadCreate: async (req, upload) => {
      const ctx = contexts.get(req);
      const urlId = store.urlId(upload.id);
      if (!ctx?.creation || !urlId) throw badRequest('An upload is created only through its build.');
      const { buildId, ownerId, fileName, size } = ctx.creation;
      await ClipUpload.create({ id: urlId, buildId, ownerId, fileName, sizeBytes: size, expiresAt: new Date(Date.now() + expireMs) });
      ctx.createdId = urlId;
      // Only the file name is kept with the bytes; other metadata the client sent is dropped.
      return { metadata: { filename: fileName } };
    },
    onUploadFinish: async (_req, upload) => {
      const urlId = store.urlId(upload.id);
      if (!urlId) throw uploadGone();
      const clip = await finish(urlId);
      return { headers: { [uploadClipIdHeader]: String(clip.id) } };
    },
    onResponseError: (req, err) => {
      // Our own errors are answered by the app's error middleware (the one error contract);
      // tus's protocol errors are mapped in `refusalFrom`.
      const ctx = contexts.get(req);
      if (ctx && !isTusError(err)) ctx.error = err;
      return undefined;
    },
  });

  /** Hands the request to tus; returns its answer, or the error to pass on. */
  async function askTus(req: ExpressRequest, ctx: RequestContext): Promise<{ ok: true; answer: Response } | { ok: false; error: unknown }> {
    const headers = new Headers();
    for (const [name, value] of Object.entries(req.headers)) {
      if (value === undefined || hopByHop.has(name)) continue;
      headers.set(name, Array.isArray(value) ? value.join(', ') : value);
    }
    const withBody = req.method === 'PATCH' || req.method === 'POST';
    const init = { method: req.method, headers, ...(withBody ? { body: Readable.toWeb(req) as ReadableStream, duplex: 'half' } : {}) };
    const web = new Request(new URL(req.originalUrl, 'http://benchproof.invalid'), init as RequestInit);
    contexts.set(web, ctx);
    const answer = await tus.handleWeb(web);
    if (ctx.error !== undefined) return { ok: false, error: ctx.error };
    if (answer.status >= 400) return { ok: false, error: await refusalFrom(answer, ctx) };
    return { ok: true, answer };
  }

  /** tus's protocol refusals (plain text) in our words and codes. */
  async function refusalFrom(answer: Response, ctx: RequestContext): Promise<AppError> {
    const text = (await answer.text()).trim();
    switch (answer.status) {
      case 409: {
        const now = ctx.storeId ? await store.datastore.getUpload(ctx.storeId).then((u) => u.offset, () => null) : null;
        return Object.assign(
          conflict(
            now === null
              ? 'This request started at another byte than the upload has reached. Ask where it stands (HEAD) and send from there.'
              : `The upload has ${now} bytes, and this request started at another byte. Ask where it stands (HEAD) and send from byte ${now}.`,
            'upload_offset_mismatch',
          ),
          { offset: now },
        );
      }
      case 404:
        return uploadGone();
      case 410:
        return uploadExpired(hoursText(config.uploads.expireSeconds));
      case 413:
        return /maximum/i.test(text)
          ? tooLargeError(config.uploads.maxBytes)
          : new AppError(413, 'too_large', 'This request carries more bytes than the upload was created for (Upload-Length). Send only the rest of the file.');
      case 412:
        return new AppError(412, 'tus_version', `Send the header Tus-Resumable: ${TUS_RESUMABLE} with every upload request.`);
      case 423:
        return uploadBusy();
      case 403:
        // tus answers a missing Upload-Offset or Content-Type with 403; for us it is a malformed request.
        return badRequest(
          /offset/i.test(text)
            ? 'Send Upload-Offset with the byte this request starts at.'
            : 'Send the bytes with Content-Type: application/offset+octet-stream.',
          [{ path: /offset/i.test(text) ? 'Upload-Offset' : 'Content-Type', message: 'missing' }],
        );
      case 400:
        if (/lock/i.test(text)) return uploadBusy();
        return badRequest(`The upload request is not in the expected form (${text.replace(/\s+/g, ' ').slice(0, 200)}). Send the headers of tus ${TUS_RESUMABLE}.`);
      case 500:
        if (/lock/i.test(text)) return uploadBusy();
        return new AppError(500, 'internal', 'Something went wrong on our side while receiving the upload. Ask where it stands and continue; if it keeps happening, tell the site admin.');
      default:
        return new AppError(answer.status, answer.status >= 500 ? 'internal' : 'bad_request', 'The upload request could not be completed. Ask where it stands (HEAD) and continue from there.');
    }
  }

  /** Writes a successful tus answer (its status and protocol headers; no body). */
  function send(res: ExpressResponse, answer: Response) {
    res.status(answer.status);
    answer.headers.forEach((value, name) => {
      if (name.startsWith('access-control-') || name === 'content-length' || name === 'connection' || name === 'content-type') return;
      res.setHeader(name, value);
    });
    res.set('Cache-Control', 'no-store');
    res.end();
  }

  function fail(res: ExpressResponse, next: NextFunction, error: unknown) {
    const offset = (error as { offset?: number | null }).offset;
    if (typeof offset === 'number') res.set('Upload-Offset', String(offset));
    if (error instanceof AppError && error.status === 423) res.set('Retry-After', '2');
    next(error);
  }

  /**
   * The checks of a creation request, before a byte is stored: the length and file name, the
   * size limit (413, the one-shot words), the builder's unfinished uploads, the build's room.
   */
  async function admit(req: ExpressRequest, buildId: number, user: User): Promise<Creation> {
    if (req.get('upload-defer-length') !== undefined) {
      throw badRequest("Send the file's size in Upload-Length when the upload is created; uploads of unknown length are not taken.", [{ path: 'Upload-Length', message: 'missing' }]);
    }
    const lengthText = req.get('upload-length') ?? '';
    if (!/^\d{1,16}$/.test(lengthText)) {
      throw badRequest("Send the file's size in bytes in the header Upload-Length.", [{ path: 'Upload-Length', message: lengthText ? 'not a whole number of bytes' : 'missing' }]);
    }
    const size = Number(lengthText);
    if (size > config.uploads.maxBytes) throw tooLargeError(config.uploads.maxBytes);
    if (size === 0) throw new AppError(400, 'empty_file', 'The file is empty (0 bytes). Choose the video file again.');

    let metadata: Record<string, string | null>;
    try {
      metadata = Metadata.parse(req.get('upload-metadata'));
    } catch {
      throw badRequest('Send the file name in Upload-Metadata as "filename <base64 of the name>".', [{ path: 'Upload-Metadata', message: 'missing or not valid' }]);
    }
    const fileName = (metadata.filename ?? '').trim();
    if (!fileName) throw badRequest('Send the file name in Upload-Metadata as "filename <base64 of the name>".', [{ path: 'Upload-Metadata.filename', message: 'missing' }]);
    if (!isTextWithoutNul(fileName)) {
      throw badRequest(`The file name ${noNulMessage}. Rename the file and send it again.`, [{ path: 'Upload-Metadata.filename', message: `file name ${noNulMessage}` }]);
    }

    const open = { state: { [Op.in]: ['receiving', 'finishing'] }, expiresAt: { [Op.gt]: new Date() } };
    const mine = await ClipUpload.count({ where: { ownerId: user.id, ...open } });
    if (mine >= config.uploads.openPerBuilder) {
      throw conflict(
        `You have ${mine} uploads that have not finished, the most one builder can have. Finish or cancel one of them, then start this one.`,
        'too_many_uploads',
      );
    }
    const [clips, coming] = await Promise.all([Clip.count({ where: { buildId } }), ClipUpload.count({ where: { buildId, ...open } })]);
    if (clips + coming >= config.uploads.clipsPerBuild) {
      throw conflict(
        coming === 0
          ? `This build already has ${clips} clips, the most one build can hold. Remove a clip first.`
          : `This build has ${clips} clips and ${coming} more on their way, the most one build can hold. Remove a clip or cancel an upload first.`,
        'too_many_clips',
      );
    }
    return { buildId, ownerId: user.id, fileName: fileName.slice(0, 255), size };
  }

  /** The upload at this address, for the build's builder; 404 for anything else. */
  async function uploadFor(buildId: number, uploadId: string, user: User | undefined): Promise<ClipUpload> {
    const build = await buildForOwner(buildId, user);
    const row = await ClipUpload.findOne({ where: { id: uploadId, buildId: build.id } });
    if (!row || row.ownerId !== user!.id) throw uploadGone();
    return row;
  }

  function expired(row: ClipUpload) {
    return row.state !== 'done' && row.expiresAt.getTime() <= Date.now();
  }

  /** A "finishing" row left by a process that died: back to "receiving", its bytes are still stored. */
  async function reviveIfStale(row: ClipUpload) {
    if (row.state === 'finishing' && !finishing.has(row.id) && Date.now() - row.updatedAt.getTime() > FINISHING_STALE_MS) {
      await ClipUpload.update({ state: 'receiving' }, { where: { id: row.id, state: 'finishing' } });
      await row.reload();
    }
  }

  /**
   * Turns a complete upload into a clip, once: the row moves from "receiving" to "finishing"
   * (so two requests, or two processes, never file it twice), the bytes are copied out of the
   * upload store and go through `acceptUpload`. A refusal removes the upload; a failure of ours
   * leaves its bytes in place so that asking again can finish it.
   */
  function finish(urlId: string): Promise<Clip> {
    let running = finishing.get(urlId);
    if (!running) {
      running = finishOnce(urlId).finally(() => finishing.delete(urlId));
      finishing.set(urlId, running);
    }
    return running;
  }

  async function finishOnce(urlId: string): Promise<Clip> {
    const [claimed] = await ClipUpload.update({ state: 'finishing' }, { where: { id: urlId, state: 'receiving' } });
    const row = await ClipUpload.findByPk(urlId);
    if (!row) throw uploadGone();
    if (claimed === 0) {
      const clip = row.state === 'done' && row.clipId ? await Clip.findByPk(row.clipId) : null;
      if (clip) return clip;
      throw uploadBusy();
    }
    const storeId = store.storeId(urlId);
    await fsp.mkdir(incomingDir, { recursive: true });
    const local = path.join(incomingDir, `${crypto.randomUUID()}.upload`);
    let clip: Clip;
    try {
      await store.copyOut(storeId, local);
      const { size } = await fsp.stat(local);
      clip = await acceptUpload(
        { storage, maxSeconds: config.uploads.maxSeconds, clipsPerBuild: config.uploads.clipsPerBuild },
        row.buildId,
        { path: local, originalname: row.fileName, size },
        undefined,
      );
    } catch (err) {
      await fsp.rm(local, { force: true });
      if (err instanceof AppError && err.status < 500) {
        // Refused for what the file is: the one-shot route's answer, and nothing is kept.
        await store.discard(storeId).catch((e: unknown) => logger.warn({ err: e, upload: urlId }, 'could not remove a refused upload; the sweep will'));
        await row.destroy();
      } else {
        await ClipUpload.update({ state: 'receiving' }, { where: { id: urlId, state: 'finishing' } }).catch(() => undefined);
      }
      throw err;
    }
    await row.update({ state: 'done', clipId: clip.id });
    await store.discard(storeId).catch((e: unknown) => logger.warn({ err: e, upload: urlId }, 'could not remove a finished upload; the sweep will'));
    if (queue) await enqueueClip(queue, clip.id);
    return clip;
  }

  /** POST: checks done, the upload is created (201, Location, Upload-Expires). */
  async function create(req: ExpressRequest, res: ExpressResponse, next: NextFunction, creation: Creation) {
    const ctx: RequestContext = { creation };
    const got = await askTus(req, ctx);
    if (!got.ok) {
      // Nothing of a failed creation stays: its row (if the store failed after it) goes too.
      if (ctx.createdId) {
        const row = await ClipUpload.findByPk(ctx.createdId);
        if (row?.state === 'receiving') {
          await store.discard(store.storeId(row.id)).catch(() => undefined);
          await row.destroy();
        }
      }
      return fail(res, next, got.error);
    }
    send(res, got.answer);
  }

  /** HEAD: where the upload stands; after it became a clip, which clip. */
  async function head(row: ClipUpload, req: ExpressRequest, res: ExpressResponse, next: NextFunction) {
    await reviveIfStale(row);
    if (row.state === 'done') {
      res.status(200).set({ 'Upload-Offset': String(row.sizeBytes), 'Upload-Length': String(row.sizeBytes), 'Cache-Control': 'no-store' });
      if (row.clipId) res.set(uploadClipIdHeader, String(row.clipId));
      return res.end();
    }
    if (row.state === 'finishing') return fail(res, next, uploadBusy());
    if (expired(row)) return fail(res, next, uploadExpired(hoursText(config.uploads.expireSeconds)));
    const got = await askTus(req, { storeId: store.storeId(row.id) });
    if (!got.ok) return fail(res, next, got.error);
    const offset = got.answer.headers.get('upload-offset');
    if (offset !== null && offset === got.answer.headers.get('upload-length')) {
      // Every byte is here but no clip was made (the last answer was lost with its process):
      // make it now; the client asks again and learns the clip.
      finish(row.id).catch((err: unknown) => logger.info({ err, upload: row.id }, 'finishing an upload found complete ended without a clip'));
      return fail(res, next, uploadBusy());
    }
    res.set('Upload-Expires', row.expiresAt.toUTCString());
    send(res, got.answer);
  }

  /** PATCH: bytes at an offset; the last one makes the clip (its id in Benchproof-Clip-Id). */
  async function patch(row: ClipUpload, req: ExpressRequest, res: ExpressResponse, next: NextFunction) {
    await reviveIfStale(row);
    if (row.state === 'done') {
      const error = Object.assign(conflict('This upload is complete: every byte arrived and it became a clip. Ask where it stands (HEAD) to learn which.', 'upload_offset_mismatch'), {
        offset: Number(row.sizeBytes),
      });
      return fail(res, next, error);
    }
    if (row.state === 'finishing') return fail(res, next, uploadBusy());
    if (expired(row)) return fail(res, next, uploadExpired(hoursText(config.uploads.expireSeconds)));
    const got = await askTus(req, { storeId: store.storeId(row.id) });
    if (!got.ok) return fail(res, next, got.error);
    send(res, got.answer);
  }

  /** DELETE: the builder cancels; the bytes and the row go. */
  async function terminate(row: ClipUpload, req: ExpressRequest, res: ExpressResponse, next: NextFunction) {
    await reviveIfStale(row);
    if (row.state === 'finishing') return fail(res, next, uploadBusy());
    if (row.state === 'receiving') {
      const got = await askTus(req, { storeId: store.storeId(row.id) });
      if (!got.ok) return fail(res, next, got.error);
    }
    await ClipUpload.destroy({ where: { id: row.id, state: { [Op.ne]: 'finishing' } } });
    res.status(204).set('Cache-Control', 'no-store').end();
  }

  let sweeping: Promise<number> | null = null;

  /** Removes expired uploads (their bytes and rows) and whatever the store holds past its expiry; returns how many rows went. */
  function sweep(): Promise<number> {
    sweeping ??= (async () => {
      const now = new Date();
      const rows = await ClipUpload.findAll({
        where: {
          expiresAt: { [Op.lte]: now },
          [Op.or]: [{ state: { [Op.ne]: 'finishing' } }, { updatedAt: { [Op.lt]: new Date(Date.now() - FINISHING_STALE_MS) } }],
        },
        limit: 500,
      });
      let removed = 0;
      for (const row of rows) {
        if (finishing.has(row.id)) continue;
        await store.discard(store.storeId(row.id));
        await row.destroy();
        removed += 1;
      }
      // Bytes without a row (the build was deleted, or a creation failed half-way). Skipped
      // while this process copies a finished upload out, which must not lose its bytes.
      if (finishing.size === 0) await tus.cleanUpExpiredUploads();
      return removed;
    })().finally(() => {
      sweeping = null;
    });
    return sweeping;
  }

  const timer = setInterval(() => {
    sweep().catch((err: unknown) => logger.warn({ err }, 'removing expired uploads failed; the next sweep tries again'));
  }, config.uploads.sweepSeconds * 1000);
  timer.unref();

  return {
    admit,
    uploadFor,
    create,
    head,
    patch,
    terminate,
    sweep,
    /** The store the bytes of unfinished uploads live in (for tests and tools). */
    store,
    async close() {
      clearInterval(timer);
      await sweeping?.catch(() => undefined);
      await Promise.allSettled(finishing.values());
    },
  };
}

export type ResumableUploads = ReturnType<typeof createResumableUploads>;

/** tus's own protocol errors are plain objects with a status code and a text body. */
function isTusError(err: unknown): boolean {
  return typeof err === 'object' && err !== null && !(err instanceof Error) && typeof (err as { status_code?: unknown }).status_code === 'number';
}
