import crypto from 'node:crypto';
import fs from 'node:fs';
import fsp from 'node:fs/promises';
import path from 'node:path';
import type { Readable } from 'node:stream';
import { pipeline } from 'node:stream/promises';
import {
  DeleteObjectCommand,
  DeleteObjectsCommand,
  GetObjectCommand,
  HeadObjectCommand,
  ListObjectsV2Command,
  S3Client,
  type S3ClientConfig,
} from '@aws-sdk/client-s3';
import { Upload } from '@aws-sdk/lib-storage';
import type { Response } from 'express';
import { assertSafeKey, type Storage } from './storage';

export interface S3StorageOptions {
  bucket: string;
  region: string;
  /** An S3-compatible service (MinIO, R2, a local fake…); unset for AWS itself. */
  endpoint?: string;
  /** Bucket in the path instead of the host name; most S3-compatible services need it. */
  forcePathStyle?: boolean;
  /** Both or neither: without them the SDK's default chain is used (AWS_* env, instance role). */
  accessKeyId?: string;
  secretAccessKey?: string;
  /** Folder inside the bucket that every key goes under, so one bucket can hold several sites. */
  prefix?: string;
  /** Local folder for uploads in progress, ffmpeg work and downloaded copies. */
  scratchDir: string;
  /** Bytes per part of a multipart upload (at least 5 MiB, S3's minimum); smaller files go in one PUT. */
  partSize?: number;
  /** Keys per listing page (S3's maximum is 1000); smaller only to exercise paging in tests. */
  listPageSize?: number;
}

const MiB = 1024 * 1024;
/** S3 allows at most 10,000 parts per upload and 1,000 keys per DeleteObjects call. */
const maxParts = 10_000;
const deleteBatch = 1000;

/**
 * Media in an S3 bucket. Objects are written whole (a PUT, or a multipart upload completed at
 * the end), so a reader never sees half a file, the same promise the local driver's rename makes.
 */
export function s3Storage(opts: S3StorageOptions): Storage {
  if (Boolean(opts.accessKeyId) !== Boolean(opts.secretAccessKey)) {
    throw new Error('S3 storage needs both an access key id and a secret access key, or neither.');
  }
  const prefix = (opts.prefix ?? '').replace(/\/+$/, '');
  if (prefix) assertSafeKey(prefix);
  const Bucket = opts.bucket;
  const minPart = Math.max(5 * MiB, opts.partSize ?? 8 * MiB);
  const pageSize = Math.min(1000, Math.max(1, opts.listPageSize ?? 1000));
  const scratch = path.resolve(opts.scratchDir);
  const downloads = path.join(scratch, 'downloads');
  fs.mkdirSync(downloads, { recursive: true });

  const config: S3ClientConfig = {
    region: opts.region,
    endpoint: opts.endpoint,
    forcePathStyle: opts.forcePathStyle,
    credentials:
      opts.accessKeyId && opts.secretAccessKey
        ? { accessKeyId: opts.accessKeyId, secretAccessKey: opts.secretAccessKey }
        : undefined,
    // Since early 2025 the SDK adds CRC checksums to every upload by default, sent as an
    // aws-chunked body with a trailer. Many S3-compatible services store that framing as the
    // object's bytes (s3rver does); send checksums only where an operation requires them.
    ...(opts.endpoint ? { requestChecksumCalculation: 'WHEN_REQUIRED', responseChecksumValidation: 'WHEN_REQUIRED' } : {}),
  };
  const client = new S3Client(config);

  const objectKey = (key: string) => {
    assertSafeKey(key);
    return prefix ? `${prefix}/${key}` : key;
  };

  const head = async (Key: string, abortSignal?: AbortSignal) => {
    try {
      return await client.send(new HeadObjectCommand({ Bucket, Key }), { abortSignal });
    } catch (err) {
      if (isNotFound(err)) return null;
      throw err;
    }
  };

  return {
    async putFile(key, localPath, putOpts) {
      const Key = objectKey(key);
      const { size } = await fsp.stat(localPath);
      // `readOnly` needs nothing here: an object cannot be changed in place, only replaced by a
      // new PUT, and nothing in the app writes under an original's key twice.
      const upload = new Upload({
        client,
        params: { Bucket, Key, Body: fs.createReadStream(localPath), ContentType: putOpts.contentType },
        partSize: Math.max(minPart, Math.ceil(size / maxParts)),
        queueSize: 4,
        leavePartsOnError: false,
      });
      await upload.done();
      // The local driver moves the file in; remove ours so callers see the same effect.
      await fsp.rm(localPath, { force: true });
    },

    async stat(key) {
      const h = await head(objectKey(key));
      return h ? { size: h.ContentLength ?? 0 } : null;
    },

    async send(res: Response, key, sendOpts) {
      const Key = objectKey(key);
      const req = res.req;
      // Stop talking to S3 as soon as the browser goes away (players abort ranges all the time).
      const abort = new AbortController();
      const onClose = () => abort.abort();
      res.once('close', onClose);
      // A response closed before its end is the browser leaving, not an error of ours.
      const wentAway = () => abort.signal.aborted && !res.writableFinished;
      try {
        const h = await head(Key, abort.signal);
        if (!h) throw httpError(404, 'There is nothing under this storage key.');
        const size = h.ContentLength ?? 0;

        res.setHeader('Accept-Ranges', 'bytes');
        if (!res.getHeader('Cache-Control')) res.setHeader('Cache-Control', `public, max-age=${Math.floor(sendOpts.cacheSeconds ?? 0)}`);
        if (h.LastModified) res.setHeader('Last-Modified', h.LastModified.toUTCString());
        if (h.ETag) res.setHeader('ETag', h.ETag);
        res.setHeader('Content-Type', sendOpts.contentType);
        res.setHeader('X-Content-Type-Options', 'nosniff');

        // Conditional GET, as express's sendFile does it.
        if (preconditionFailed(req.headers, h.ETag, h.LastModified)) throw httpError(412, 'Precondition failed.');
        if (req.fresh) {
          for (const name of ['Content-Type', 'Content-Length', 'Content-Range']) res.removeHeader(name);
          res.status(304).end();
          return;
        }

        let start = 0;
        let end = size - 1;
        const rangeHeader = req.headers.range;
        if (rangeHeader && /^ *bytes=/.test(rangeHeader) && rangeIsFresh(req.get('If-Range'), h.ETag, h.LastModified)) {
          const ranges = parseByteRanges(size, rangeHeader);
          if (ranges === 'unsatisfiable') {
            // Thrown like sendFile's 416, so the app's error middleware writes the body.
            res.setHeader('Content-Range', `bytes */${size}`);
            throw httpError(416, 'Range not satisfiable.');
          }
          // Malformed and multiple ranges are answered with the whole object, as sendFile does.
          if (ranges !== 'malformed' && ranges.length === 1) {
            start = ranges[0]!.start;
            end = ranges[0]!.end;
            res.status(206);
            res.setHeader('Content-Range', `bytes ${start}-${end}/${size}`);
          }
        }
        const length = Math.max(0, end - start + 1);
        res.setHeader('Content-Length', String(length));
        if (req.method === 'HEAD' || length === 0) {
          res.end();
          return;
        }

        const got = await client.send(
          new GetObjectCommand({
            Bucket,
            Key,
            Range: res.statusCode === 206 ? `bytes=${start}-${end}` : undefined,
            // The object we described in the headers, or an error rather than other bytes.
            IfMatch: h.ETag,
          }),
          { abortSignal: abort.signal },
        );
        const body = got.Body as Readable | undefined;
        if (!body) throw new Error(`S3 returned no body for ${Key}`);
        try {
          // pipeline destroys the S3 stream when the response closes early.
          await pipeline(body, res);
        } catch (err) {
          if (wentAway()) return;
          throw err;
        }
      } catch (err) {
        if (wentAway()) return;
        throw err;
      } finally {
        res.off('close', onClose);
      }
    },

    async localCopy(key) {
      const Key = objectKey(key);
      const file = path.join(downloads, `${crypto.randomUUID()}-${path.basename(key)}`);
      try {
        const got = await client.send(new GetObjectCommand({ Bucket, Key }));
        const body = got.Body as Readable | undefined;
        if (!body) throw new Error(`S3 returned no body for ${Key}`);
        await pipeline(body, fs.createWriteStream(file, { flags: 'wx' }));
        const { size } = await fsp.stat(file);
        if (got.ContentLength !== undefined && size !== got.ContentLength) {
          throw new Error(`download of ${Key} stopped at ${size} of ${got.ContentLength} bytes`);
        }
      } catch (err) {
        await fsp.rm(file, { force: true });
        throw err;
      }
      return { path: file, release: () => fsp.rm(file, { force: true }) };
    },

    async deletePrefix(prefixToDelete) {
      const Prefix = `${objectKey(prefixToDelete)}/`;
      // List everything first, then delete: some S3-compatible services page by position, and
      // deleting while paging would skip keys there.
      const keys = (await listUnder(Prefix)).map((o) => o.Key);

      for (let i = 0; i < keys.length; i += deleteBatch) {
        const batch = keys.slice(i, i + deleteBatch);
        const out = await client.send(
          new DeleteObjectsCommand({ Bucket, Delete: { Objects: batch.map((Key) => ({ Key })), Quiet: true } }),
        );
        if (out.Errors?.length) {
          const first = out.Errors[0]!;
          throw new Error(`S3 refused to delete ${out.Errors.length} of ${batch.length} objects under ${Prefix} (first: ${first.Key}: ${first.Code})`);
        }
      }
    },

    async list(prefixToList) {
      const Prefix = prefixToList ? `${objectKey(prefixToList)}/` : prefix ? `${prefix}/` : '';
      const strip = prefix ? prefix.length + 1 : 0;
      return (await listUnder(Prefix)).map((o) => ({ key: o.Key.slice(strip), size: o.Size, modified: o.LastModified }));
    },

    async delete(key) {
      await client.send(new DeleteObjectCommand({ Bucket, Key: objectKey(key) }));
    },

    scratchDir: () => scratch,
  };

  async function listUnder(Prefix: string) {
    const found: { Key: string; Size: number; LastModified: Date }[] = [];
    let ContinuationToken: string | undefined;
    do {
      const page = await client.send(new ListObjectsV2Command({ Bucket, Prefix, ContinuationToken, MaxKeys: pageSize }));
      for (const o of page.Contents ?? []) {
        if (o.Key) found.push({ Key: o.Key, Size: o.Size ?? 0, LastModified: o.LastModified ?? new Date(0) });
      }
      ContinuationToken = page.IsTruncated ? page.NextContinuationToken : undefined;
    } while (ContinuationToken);
    return found;
  }
}

type ByteRange = { start: number; end: number };

/**
 * Parses a `Range: bytes=…` header against an object of `size` bytes with the rules of
 * range-parser (what express's sendFile uses): `a-b`, `a-`, `-n`; an end past the object is cut
 * to its last byte; overlapping or adjacent ranges are combined.
 */
export function parseByteRanges(size: number, header: string): ByteRange[] | 'unsatisfiable' | 'malformed' {
  const eq = header.indexOf('=');
  if (eq === -1) return 'malformed';
  const ranges: ByteRange[] = [];
  for (const part of header.slice(eq + 1).split(',')) {
    const dash = part.indexOf('-');
    if (dash === -1) return 'malformed';
    const startText = part.slice(0, dash).trim();
    const endText = part.slice(dash + 1).trim();
    let start = digits(startText);
    let end = digits(endText);
    if (startText.length === 0) {
      start = size - end;
      end = size - 1;
    } else if (endText.length === 0) {
      end = size - 1;
    }
    if (end > size - 1) end = size - 1;
    if (Number.isNaN(start) || Number.isNaN(end)) return 'malformed';
    if (start > end || start < 0) continue;
    ranges.push({ start, end });
  }
  if (ranges.length === 0) return 'unsatisfiable';
  ranges.sort((a, b) => a.start - b.start);
  const combined: ByteRange[] = [];
  for (const r of ranges) {
    const last = combined[combined.length - 1];
    if (last && r.start <= last.end + 1) last.end = Math.max(last.end, r.end);
    else combined.push({ ...r });
  }
  return combined;
}

const digits = (text: string) => (/^\d+$/.test(text) ? Number(text) : Number.NaN);

function rangeIsFresh(ifRange: string | undefined, etag: string | undefined, lastModified: Date | undefined) {
  if (!ifRange) return true;
  if (ifRange.includes('"')) return Boolean(etag && ifRange.includes(etag));
  return lastModified !== undefined && Math.floor(lastModified.getTime() / 1000) * 1000 <= Date.parse(ifRange);
}

/** If-Match and If-Unmodified-Since, as sendFile checks them. */
function preconditionFailed(headers: Response['req']['headers'], etag: string | undefined, lastModified: Date | undefined) {
  const ifMatch = headers['if-match'];
  if (ifMatch) {
    if (ifMatch.trim() === '*') return false;
    const wanted = ifMatch.split(',').map((t) => t.trim().replace(/^W\//, ''));
    return !etag || !wanted.includes(etag.replace(/^W\//, ''));
  }
  const since = headers['if-unmodified-since'];
  if (since && lastModified) {
    const limit = Date.parse(since);
    return !Number.isNaN(limit) && lastModified.getTime() > limit + 999;
  }
  return false;
}

function httpError(status: number, message: string) {
  // The shape http-errors gives sendFile's errors; the error middleware reads `status`.
  return Object.assign(new Error(message), { status, statusCode: status, expose: true });
}

function isNotFound(err: unknown) {
  const e = err as { name?: string; $metadata?: { httpStatusCode?: number } };
  return e?.name === 'NotFound' || e?.name === 'NoSuchKey' || e?.$metadata?.httpStatusCode === 404;
}
