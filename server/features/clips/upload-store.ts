import fs from 'node:fs';
import fsp from 'node:fs/promises';
import path from 'node:path';
import { Transform, type Readable } from 'node:stream';
import { pipeline } from 'node:stream/promises';
import type { ListMultipartUploadsCommandOutput } from '@aws-sdk/client-s3';
import { FileStore } from '@tus/file-store';
import { S3Store } from '@tus/s3-store';
import { ERRORS, type DataStore } from '@tus/server';
import type { StorageSettings } from '../../storage/select-storage';

/**
 * Where the bytes of unfinished resumable uploads live, beside the tus data store that writes
 * them: a folder under the scratch area for the local driver, objects under `uploads/` in the
 * bucket for S3. Only ids we generated (32 hex digits) ever reach it.
 */
export interface UploadStore {
  datastore: DataStore;
  /** The store's id of the upload whose URL ends in `urlId`. */
  storeId(urlId: string): string;
  /** The URL id of a store id; null for an id that is not one of ours. */
  urlId(storeId: string): string | null;
  /** Puts the finished upload's bytes in a local file at `dest`; the store keeps its own copy. */
  copyOut(storeId: string, dest: string): Promise<void>;
  /** Removes everything the store holds of an upload; nothing happens when it holds nothing. */
  discard(storeId: string): Promise<void>;
}

/** An upload's id in its URL (and our table): 128 random bits in hex. */
export const uploadIdPattern = /^[0-9a-f]{32}$/;

/** What a full or unwritable disk says; passed on whole so the error middleware answers 507/503. */
const diskErrors = new Set(['ENOSPC', 'EDQUOT', 'EACCES', 'EPERM', 'EROFS']);

/** The file store, with a disk that is full or read-only reported as such rather than as "write error". */
class ClipFileStore extends FileStore {
  override async write(readable: Readable, id: string, offset: number): Promise<number> {
    const out = fs.createWriteStream(path.join(this.directory, id), { flags: 'r+', start: offset });
    let received = 0;
    const count = new Transform({
      transform(chunk: Buffer, _encoding, callback) {
        received += chunk.length;
        callback(null, chunk);
      },
    });
    try {
      await pipeline(readable, count, out);
    } catch (err) {
      if (diskErrors.has((err as NodeJS.ErrnoException)?.code ?? '')) throw err;
      throw ERRORS.FILE_WRITE_ERROR;
    }
    return offset + received;
  }

  override async remove(id: string): Promise<void> {
    await Promise.all([fsp.rm(path.join(this.directory, id), { force: true }), fsp.rm(path.join(this.directory, `${id}.json`), { force: true })]);
  }
}

// The folder is made (synchronously) before the store is built. @tus/file-store's constructor
// makes it again asynchronously and throws from the callback when that fails, which no caller can
// catch: a server stopped at once, its media folder removed, would crash the process. Ours does
// nothing. (The method is private in the package's types, so it is replaced on the prototype.)
Object.defineProperty(ClipFileStore.prototype, 'checkOrCreateDirectory', { value: () => undefined });

function localUploadStore(directory: string, expireMs: number): UploadStore {
  fs.mkdirSync(directory, { recursive: true });
  const datastore = new ClipFileStore({ directory, expirationPeriodInMilliseconds: expireMs });
  const fileOf = (id: string) => {
    if (!uploadIdPattern.test(id)) throw new Error(`not an upload id: ${JSON.stringify(id)}`);
    return path.join(directory, id);
  };
  return {
    datastore,
    storeId: (urlId) => urlId,
    urlId: (storeId) => (uploadIdPattern.test(storeId) ? storeId : null),
    async copyOut(storeId, dest) {
      // A second name for the same bytes: instant on one disk, and the upload keeps its own.
      try {
        await fsp.link(fileOf(storeId), dest);
      } catch (err) {
        if (!['EXDEV', 'EPERM', 'ENOTSUP', 'EMLINK'].includes((err as NodeJS.ErrnoException).code ?? '')) throw err;
        await fsp.copyFile(fileOf(storeId), dest, fs.constants.COPYFILE_EXCL);
      }
    },
    async discard(storeId) {
      fileOf(storeId);
      await datastore.remove(storeId);
    },
  };
}

const isMissing = (err: unknown) => {
  const e = err as { name?: string; Code?: string; $metadata?: { httpStatusCode?: number } } | undefined;
  return ['NoSuchUpload', 'NoSuchKey', 'NotFound'].includes(e?.name ?? e?.Code ?? '') || e?.$metadata?.httpStatusCode === 404;
};

/**
 * The S3 store with every key under one folder, a removal that also takes the last incomplete
 * part and works after the multipart upload has been completed, and an expiry sweep that looks
 * only at that folder (so it never touches the app's own multipart uploads of clips).
 */
class ClipS3Store extends S3Store {
  constructor(
    options: ConstructorParameters<typeof S3Store>[0],
    private readonly keyPrefix: string,
  ) {
    super(options);
  }

  override async remove(id: string): Promise<void> {
    let uploadId: string | undefined;
    try {
      uploadId = (await this.getMetadata(id))['upload-id'];
    } catch (err) {
      if (!isMissing(err)) throw err;
    }
    if (uploadId) {
      try {
        await this.client.abortMultipartUpload({ Bucket: this.bucket, Key: id, UploadId: uploadId });
      } catch (err) {
        // Completed (the file is whole now) or already gone: the objects below are what is left.
        if (!isMissing(err)) throw err;
      }
    }
    await this.client.deleteObjects({
      Bucket: this.bucket,
      Delete: { Objects: [{ Key: id }, { Key: this.infoKey(id) }, { Key: this.partKey(id, true) }], Quiet: true },
    });
    await this.clearCache(id);
  }

  override async deleteExpired(): Promise<number> {
    const expireMs = this.getExpiration();
    if (expireMs === 0) return 0;
    let removed = 0;
    let KeyMarker: string | undefined;
    let UploadIdMarker: string | undefined;
    for (;;) {
      const page: ListMultipartUploadsCommandOutput = await this.client.listMultipartUploads({ Bucket: this.bucket, Prefix: this.keyPrefix, KeyMarker, UploadIdMarker });
      for (const u of page.Uploads ?? []) {
        if (!u.Key?.startsWith(this.keyPrefix) || !u.Initiated || Date.now() <= u.Initiated.getTime() + expireMs) continue;
        await this.remove(u.Key);
        removed += 1;
      }
      if (!page.IsTruncated) return removed;
      KeyMarker = page.NextKeyMarker;
      UploadIdMarker = page.NextUploadIdMarker;
    }
  }

  async copyOut(id: string, dest: string): Promise<void> {
    try {
      await pipeline(await this.read(id), fs.createWriteStream(dest, { flags: 'wx' }));
    } catch (err) {
      await fsp.rm(dest, { force: true });
      throw err;
    }
  }
}

function s3UploadStore(s3: NonNullable<StorageSettings['s3']>, expireMs: number): UploadStore {
  const keyPrefix = `${s3.prefix ? `${s3.prefix.replace(/\/+$/, '')}/` : ''}uploads/`;
  const datastore = new ClipS3Store(
    {
      expirationPeriodInMilliseconds: expireMs,
      // Our own sweep removes expired uploads; no bucket lifecycle rule is needed for tags.
      useTags: false,
      s3ClientConfig: {
        bucket: s3.bucket,
        region: s3.region,
        endpoint: s3.endpoint,
        forcePathStyle: s3.forcePathStyle,
        credentials: s3.accessKeyId && s3.secretAccessKey ? { accessKeyId: s3.accessKeyId, secretAccessKey: s3.secretAccessKey } : undefined,
        // As in s3-storage.ts: S3-compatible services may store the SDK's checksum framing as bytes.
        ...(s3.endpoint ? { requestChecksumCalculation: 'WHEN_REQUIRED' as const, responseChecksumValidation: 'WHEN_REQUIRED' as const } : {}),
      },
    },
    keyPrefix,
  );
  const checked = (id: string) => {
    if (!id.startsWith(keyPrefix) || !uploadIdPattern.test(id.slice(keyPrefix.length))) throw new Error(`not an upload id: ${JSON.stringify(id)}`);
    return id;
  };
  return {
    datastore,
    storeId: (urlId) => `${keyPrefix}${urlId}`,
    urlId: (storeId) => (storeId.startsWith(keyPrefix) && uploadIdPattern.test(storeId.slice(keyPrefix.length)) ? storeId.slice(keyPrefix.length) : null),
    copyOut: (storeId, dest) => datastore.copyOut(checked(storeId), dest),
    discard: (storeId) => datastore.remove(checked(storeId)),
  };
}

/** The upload store for the configured media driver. */
export function uploadStoreFor(settings: StorageSettings, scratchDir: string, expireMs: number): UploadStore {
  if (settings.driver === 's3') {
    if (!settings.s3) throw new Error('The S3 storage driver needs its settings (S3_BUCKET).');
    return s3UploadStore(settings.s3, expireMs);
  }
  return localUploadStore(path.join(scratchDir, 'uploads'), expireMs);
}
