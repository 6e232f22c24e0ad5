import crypto from 'node:crypto';
import fs from 'node:fs';
import fsp from 'node:fs/promises';
import http from 'node:http';
import type { AddressInfo } from 'node:net';
import os from 'node:os';
import path from 'node:path';
import { HeadObjectCommand, ListObjectsV2Command, S3Client } from '@aws-sdk/client-s3';
import express, { type Response } from 'express';
import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { errorHandler } from '../../../server/http/error-handler';
import { localStorage } from '../../../server/storage/local-storage';
import { s3Storage } from '../../../server/storage/s3-storage';
import { storageFromConfig } from '../../../server/storage/select-storage';
import type { Storage } from '../../../server/storage/storage';
import { startS3Fake, type S3Fake } from '../../support/s3-fake';

interface DriverUnderTest {
  storage: Storage;
  /** true when localCopy downloads (so release() must remove the copy). */
  copiesAreDownloads: boolean;
  /** false for the local driver, whose stat turns every failure into null. */
  /** Changes whenever the driver has done I/O against its store. */
  ioMark(): Promise<string>;
  stop(): Promise<void>;
}

const tempDir = (label: string) => fsp.mkdtemp(path.join(os.tmpdir(), `benchproof-${label}-`));

async function listTree(dir: string): Promise<string[]> {
  const entries = await fsp.readdir(dir, { recursive: true, withFileTypes: true });
  return entries.map((e) => path.relative(dir, path.join(e.parentPath, e.name))).sort();
}

const drivers: { name: string; start(): Promise<DriverUnderTest> }[] = [
  {
    name: 'local',
    async start() {
      const root = await tempDir('media');
      return {
        storage: localStorage(root),
        copiesAreDownloads: false,
        ioMark: async () => JSON.stringify(await listTree(root)),
        stop: () => fsp.rm(root, { recursive: true, force: true }),
      };
    },
  },
  {
    name: 's3',
    async start() {
      const fake = await startS3Fake();
      const scratch = await tempDir('s3-scratch');
      return {
        storage: s3Storage({
          bucket: fake.bucket,
          region: fake.region,
          endpoint: fake.endpoint,
          forcePathStyle: true,
          accessKeyId: fake.accessKeyId,
          secretAccessKey: fake.secretAccessKey,
          scratchDir: scratch,
          // Small pages so deletePrefix has to follow continuation tokens.
          listPageSize: 2,
        }),
        copiesAreDownloads: true,
        ioMark: async () => String(await fake.requests()),
        async stop() {
          await fake.stop();
          await fsp.rm(scratch, { recursive: true, force: true });
        },
      };
    },
  },
];

/** Deterministic bytes, so a wrong offset shows as wrong content. */
function bytes(size: number, seed = 1) {
  const out = Buffer.alloc(size);
  let x = seed;
  for (let i = 0; i < size; i++) {
    x = (x * 1103515245 + 12345) & 0x7fffffff;
    out[i] = x >> 16;
  }
  return out;
}

async function put(storage: Storage, key: string, content: Buffer, contentType = 'video/mp4') {
  const file = path.join(storage.scratchDir(), `put-${crypto.randomUUID()}`);
  await fsp.writeFile(file, content);
  await storage.putFile(key, file, { contentType });
  return file;
}

/** A tiny app that serves `?key=` through `storage.send`, with the app's own error middleware. */
function mediaApp(storage: Storage, onSent?: (outcome: Promise<void>) => void) {
  const app = express();
  app.get('/media', async (req, res) => {
    if (req.query.cacheControl) res.set('Cache-Control', String(req.query.cacheControl));
    const sent = storage.send(res, String(req.query.key), {
      contentType: String(req.query.type ?? 'video/mp4'),
      cacheSeconds: req.query.cacheSeconds ? Number(req.query.cacheSeconds) : undefined,
    });
    onSent?.(sent);
    await sent;
  });
  app.use(errorHandler);
  return app;
}

/** Collects the body as bytes whatever its content type (superagent passes the raw stream here). */
const binary = (res: request.Response, done: (err: Error | null, body: Buffer) => void) => {
  const stream = res as unknown as http.IncomingMessage;
  const chunks: Buffer[] = [];
  stream.on('data', (c: Buffer) => chunks.push(c));
  stream.on('end', () => done(null, Buffer.concat(chunks)));
};

describe.each(drivers)('the $name storage driver', ({ start }) => {
  let d: DriverUnderTest;
  let app: express.Express;
  beforeAll(async () => {
    d = await start();
    app = mediaApp(d.storage);
  });
  afterAll(async () => {
    await d?.stop();
  });

  const get = (key: string, query: Record<string, string> = {}) =>
    request(app).get('/media').query({ key, ...query }).buffer(true).parse(binary);

  it('when a file is put, stat reports its size and the local file is gone', async () => {
    const content = bytes(1234);
    const file = await put(d.storage, 'clips/put-stat/web.mp4', content);
    expect(await d.storage.stat('clips/put-stat/web.mp4')).toEqual({ size: 1234 });
    expect(fs.existsSync(file)).toBe(false);
  });

  it('when nothing is under a key, stat answers null and send answers 404', async () => {
    expect(await d.storage.stat('clips/nothing-here/web.mp4')).toBeNull();
    const res = await get('clips/nothing-here/web.mp4');
    expect(res.status).toBe(404);
  });

  it('when a read-only original is put, it can still be read and deleted with its prefix', async () => {
    const content = bytes(300, 7);
    await d.storage.putFile('clips/ro/original', await writeScratch(d.storage, content), {
      contentType: 'application/octet-stream',
      readOnly: true,
    });
    expect(await d.storage.stat('clips/ro/original')).toEqual({ size: 300 });
    await d.storage.deletePrefix('clips/ro');
    expect(await d.storage.stat('clips/ro/original')).toBeNull();
  });

  describe('send over HTTP', () => {
    const key = 'clips/send/web.mp4';
    const size = 4096;
    const content = bytes(size, 42);
    beforeAll(async () => {
      await put(d.storage, key, content);
    });

    it('without a Range header, answers 200 with the whole body and the content type', async () => {
      const res = await get(key);
      expect(res.status).toBe(200);
      expect(res.headers['content-type']).toBe('video/mp4');
      expect(res.headers['content-length']).toBe(String(size));
      expect(res.headers['accept-ranges']).toBe('bytes');
      expect(res.headers['x-content-type-options']).toBe('nosniff');
      expect(Buffer.compare(res.body as Buffer, content)).toBe(0);
    });

    it('with Range bytes=100-199, answers 206 with exactly those bytes', async () => {
      const res = await get(key).set('Range', 'bytes=100-199');
      expect(res.status).toBe(206);
      expect(res.headers['content-range']).toBe(`bytes 100-199/${size}`);
      expect(res.headers['content-length']).toBe('100');
      expect(Buffer.compare(res.body as Buffer, content.subarray(100, 200))).toBe(0);
    });

    it('with a suffix range bytes=-50, answers 206 with the last 50 bytes', async () => {
      const res = await get(key).set('Range', 'bytes=-50');
      expect(res.status).toBe(206);
      expect(res.headers['content-range']).toBe(`bytes ${size - 50}-${size - 1}/${size}`);
      expect(Buffer.compare(res.body as Buffer, content.subarray(size - 50))).toBe(0);
    });

    it('with an open range bytes=4000-, answers 206 to the end', async () => {
      const res = await get(key).set('Range', 'bytes=4000-');
      expect(res.status).toBe(206);
      expect(res.headers['content-range']).toBe(`bytes 4000-${size - 1}/${size}`);
      expect(Buffer.compare(res.body as Buffer, content.subarray(4000))).toBe(0);
    });

    it('with a range past the end, cuts it to the last byte', async () => {
      const res = await get(key).set('Range', 'bytes=4090-9999');
      expect(res.status).toBe(206);
      expect(res.headers['content-range']).toBe(`bytes 4090-${size - 1}/${size}`);
      expect((res.body as Buffer).length).toBe(6);
    });

    it('with a range that starts at the size, answers 416 with Content-Range bytes */size', async () => {
      const res = await get(key).set('Range', `bytes=${size}-`);
      expect(res.status).toBe(416);
      expect(res.headers['content-range']).toBe(`bytes */${size}`);
    });

    it('with several disjoint ranges, answers 200 with the whole object', async () => {
      const res = await get(key).set('Range', 'bytes=0-9,100-109');
      expect(res.status).toBe(200);
      expect(Buffer.compare(res.body as Buffer, content)).toBe(0);
    });

    it('with a malformed Range header, answers 200 with the whole object', async () => {
      const res = await get(key).set('Range', 'bytes=abc');
      expect(res.status).toBe(200);
      expect((res.body as Buffer).length).toBe(size);
    });

    it('for HEAD, answers the headers with no body', async () => {
      const res = await request(app).head('/media').query({ key });
      expect(res.status).toBe(200);
      expect(res.headers['content-length']).toBe(String(size));
      expect(res.headers['content-type']).toBe('video/mp4');
    });

    it('sets Cache-Control from cacheSeconds, and keeps one the route set', async () => {
      expect((await get(key, { cacheSeconds: '60' })).headers['cache-control']).toBe('public, max-age=60');
      expect((await get(key, { cacheControl: 'private, max-age=3600' })).headers['cache-control']).toBe('private, max-age=3600');
    });

    it('when the browser already has this version (If-None-Match), answers 304', async () => {
      const first = await get(key);
      expect(first.headers.etag).toBeTruthy();
      const again = await get(key).set('If-None-Match', first.headers.etag as string);
      expect(again.status).toBe(304);
    });

    it('when If-Range names another version, answers 200 with the whole object', async () => {
      const res = await get(key).set('Range', 'bytes=0-9').set('If-Range', '"some-other-version"');
      expect(res.status).toBe(200);
      expect((res.body as Buffer).length).toBe(size);
    });

    it('when the browser goes away mid-body, send settles without an error and the next request works', async () => {
      const big = bytes(4 * 1024 * 1024, 3);
      await put(d.storage, 'clips/abort/web.mp4', big);
      let outcome: Promise<void> | undefined;
      const server = http.createServer(mediaApp(d.storage, (sent) => (outcome = sent)));
      await new Promise<void>((resolve) => server.listen(0, '127.0.0.1', resolve));
      try {
        const { port } = server.address() as AddressInfo;
        await new Promise<void>((resolve, reject) => {
          const req = http.get({ host: '127.0.0.1', port, path: '/media?key=clips/abort/web.mp4' }, (res) => {
            res.once('data', () => {
              req.destroy();
              resolve();
            });
          });
          req.on('error', (err) => (req.destroyed ? resolve() : reject(err)));
        });
        await expect(
          Promise.race([outcome, new Promise((_, reject) => setTimeout(() => reject(new Error('send never settled')), 5000))]),
        ).resolves.toBeUndefined();
        const res = await get(key).set('Range', 'bytes=0-9');
        expect(res.status).toBe(206);
      } finally {
        server.closeAllConnections();
        await new Promise((resolve) => server.close(resolve));
      }
    });
  });

  it('localCopy gives a readable file with the same bytes; release removes a downloaded copy', async () => {
    const content = bytes(2048, 9);
    await put(d.storage, 'clips/copy/original', content, 'application/octet-stream');
    const copy = await d.storage.localCopy('clips/copy/original');
    expect(Buffer.compare(await fsp.readFile(copy.path), content)).toBe(0);
    await copy.release();
    // A download is removed; the local driver hands out the stored file itself, which stays.
    expect(fs.existsSync(copy.path)).toBe(!d.copiesAreDownloads);
    expect(await d.storage.stat('clips/copy/original')).toEqual({ size: 2048 });
  });

  it('deletePrefix removes every key under the prefix and nothing else', async () => {
    const inside = ['clips/p1/original', 'clips/p1/web.mp4', 'clips/p1/frames/1000.jpg', 'clips/p1/frames/2000.jpg', 'clips/p1/frames/3000.jpg'];
    // Shares the characters "clips/p1" but is another clip.
    const outside = ['clips/p1x/original', 'clips/p2/original'];
    for (const key of [...inside, ...outside]) await put(d.storage, key, bytes(10));
    await d.storage.deletePrefix('clips/p1');
    for (const key of inside) expect(await d.storage.stat(key), key).toBeNull();
    for (const key of outside) expect(await d.storage.stat(key), key).toEqual({ size: 10 });
  });

  it('list gives every object under a prefix with its size and time, and delete removes one', async () => {
    const before = Date.now() - 60_000;
    for (const [key, size] of [['clips/l1/frames/1000.jpg', 11], ['clips/l1/frames/2000.jpg', 12], ['clips/l1x/frames/1000.jpg', 13]] as const) {
      await put(d.storage, key, bytes(size));
    }
    const listed = await d.storage.list('clips/l1/frames');
    expect(listed.map((o) => [o.key, o.size]).sort()).toEqual([['clips/l1/frames/1000.jpg', 11], ['clips/l1/frames/2000.jpg', 12]]);
    for (const o of listed) expect(o.modified.getTime()).toBeGreaterThan(before);
    expect(await d.storage.list('clips/never-there')).toEqual([]);
    // The whole store: what was put, never the scratch folder.
    const all = (await d.storage.list('')).map((o) => o.key);
    expect(all).toEqual(expect.arrayContaining(['clips/l1/frames/1000.jpg', 'clips/l1x/frames/1000.jpg']));
    expect(all.some((k) => k.startsWith('.'))).toBe(false);

    await d.storage.delete('clips/l1/frames/1000.jpg');
    expect(await d.storage.stat('clips/l1/frames/1000.jpg')).toBeNull();
    expect(await d.storage.stat('clips/l1/frames/2000.jpg')).toEqual({ size: 12 });
    await expect(d.storage.delete('clips/l1/frames/1000.jpg')).resolves.toBeUndefined();
  });

  it('deletePrefix of a prefix with nothing under it does nothing', async () => {
    await expect(d.storage.deletePrefix('clips/never-there')).resolves.toBeUndefined();
  });

  it.each(['../x', '/abs', 'a/../b', 'A B', 'a/./b', '', 'a//b'])('refuses the unsafe key %j before any I/O', async (bad) => {
    const src = await writeScratch(d.storage, bytes(10));
    const before = await d.ioMark();
    const noResponse = { req: { headers: {} } } as unknown as Response;
    await expect(d.storage.putFile(bad, src, { contentType: 'video/mp4' })).rejects.toThrow(/unsafe storage key/);
    await expect(d.storage.stat(bad)).rejects.toThrow(/unsafe storage key/);
    await expect(d.storage.send(noResponse, bad, { contentType: 'video/mp4' })).rejects.toThrow(/unsafe storage key/);
    await expect(d.storage.localCopy(bad)).rejects.toThrow(/unsafe storage key/);
    await expect(d.storage.deletePrefix(bad)).rejects.toThrow(/unsafe storage key/);
    await expect(d.storage.delete(bad)).rejects.toThrow(/unsafe storage key/);
    // An empty prefix is the whole store for list; every other unsafe key is refused.
    if (bad !== '') await expect(d.storage.list(bad)).rejects.toThrow(/unsafe storage key/);
    expect(await d.ioMark()).toBe(before);
    expect(fs.existsSync(src)).toBe(true);
    await fsp.rm(src);
  });
});

async function writeScratch(storage: Storage, content: Buffer) {
  const file = path.join(storage.scratchDir(), `src-${crypto.randomUUID()}`);
  await fsp.writeFile(file, content);
  return file;
}

describe('the s3 storage driver, against the fake', () => {
  let fake: S3Fake;
  let scratch: string;
  const raw = () =>
    new S3Client({
      region: fake.region,
      endpoint: fake.endpoint,
      forcePathStyle: true,
      credentials: { accessKeyId: fake.accessKeyId, secretAccessKey: fake.secretAccessKey },
    });
  const driver = (extra: Partial<Parameters<typeof s3Storage>[0]> = {}) =>
    s3Storage({
      bucket: fake.bucket,
      region: fake.region,
      endpoint: fake.endpoint,
      forcePathStyle: true,
      accessKeyId: fake.accessKeyId,
      secretAccessKey: fake.secretAccessKey,
      scratchDir: scratch,
      ...extra,
    });
  beforeAll(async () => {
    fake = await startS3Fake();
    scratch = await tempDir('s3-only');
  });
  afterAll(async () => {
    await fake?.stop();
    await fsp.rm(scratch, { recursive: true, force: true });
  });

  it('uploads a file bigger than one part as a multipart upload, byte for byte', async () => {
    const storage = driver({ partSize: 5 * 1024 * 1024 });
    const content = bytes(6 * 1024 * 1024 + 123, 5);
    const before = await fake.requests();
    await put(storage, 'clips/multi/original', content, 'application/octet-stream');
    // Create, two parts, complete: one PUT would be a single request.
    expect((await fake.requests()) - before).toBeGreaterThanOrEqual(4);
    expect(await storage.stat('clips/multi/original')).toEqual({ size: content.length });
    const boundary = 5 * 1024 * 1024;
    const res = await request(mediaApp(storage))
      .get('/media')
      .query({ key: 'clips/multi/original' })
      .set('Range', `bytes=${boundary - 10}-${boundary + 9}`)
      .buffer(true)
      .parse(binary);
    expect(res.status).toBe(206);
    expect(Buffer.compare(res.body as Buffer, content.subarray(boundary - 10, boundary + 10))).toBe(0);
    const copy = await storage.localCopy('clips/multi/original');
    expect(Buffer.compare(await fsp.readFile(copy.path), content)).toBe(0);
    await copy.release();
  });

  it('puts an empty file and serves it as an empty 200', async () => {
    const storage = driver();
    await put(storage, 'clips/empty/poster.jpg', Buffer.alloc(0), 'image/jpeg');
    expect(await storage.stat('clips/empty/poster.jpg')).toEqual({ size: 0 });
    const res = await request(mediaApp(storage)).get('/media').query({ key: 'clips/empty/poster.jpg', type: 'image/jpeg' }).buffer(true).parse(binary);
    expect(res.status).toBe(200);
    expect((res.body as Buffer).length).toBe(0);
  });

  it('stores the content type it was given', async () => {
    const storage = driver();
    await put(storage, 'clips/type/poster.jpg', bytes(20), 'image/jpeg');
    const head = await raw().send(new HeadObjectCommand({ Bucket: fake.bucket, Key: 'clips/type/poster.jpg' }));
    expect(head.ContentType).toBe('image/jpeg');
  });

  it('with a prefix, keeps every key under it and sees nothing outside it', async () => {
    const a = driver({ prefix: 'site-a' });
    const b = driver({ prefix: 'site-b/' });
    await put(a, 'clips/shared/web.mp4', bytes(30));
    const listed = await raw().send(new ListObjectsV2Command({ Bucket: fake.bucket, Prefix: 'site-a/' }));
    expect(listed.Contents?.map((o) => o.Key)).toEqual(['site-a/clips/shared/web.mp4']);
    expect(await b.stat('clips/shared/web.mp4')).toBeNull();
    await b.deletePrefix('clips');
    expect(await a.stat('clips/shared/web.mp4')).toEqual({ size: 30 });
  });

  it('refuses an unsafe prefix and half a pair of credentials', () => {
    expect(() => driver({ prefix: '../other' })).toThrow(/unsafe storage key/);
    expect(() => driver({ secretAccessKey: undefined })).toThrow(/both an access key id and a secret/);
  });

  it('a failed download leaves no partial copy behind', async () => {
    const storage = driver();
    const before = await fsp.readdir(path.join(scratch, 'downloads'));
    await expect(storage.localCopy('clips/not-there/original')).rejects.toThrow();
    expect(await fsp.readdir(path.join(scratch, 'downloads'))).toEqual(before);
  });
});

describe('storageFromConfig', () => {
  let dir: string;
  beforeAll(async () => {
    dir = await tempDir('select');
  });
  afterAll(async () => {
    await fsp.rm(dir, { recursive: true, force: true });
  });

  it('chooses the local driver by default, storing under the media folder', async () => {
    const storage = storageFromConfig({ driver: 'local', mediaDir: dir });
    await put(storage, 'clips/sel/poster.jpg', bytes(5), 'image/jpeg');
    expect(fs.existsSync(path.join(dir, 'clips/sel/poster.jpg'))).toBe(true);
    expect(storage.scratchDir()).toBe(path.join(dir, '.scratch'));
  });

  it('chooses S3 when asked, with scratch work still under the media folder', () => {
    const storage = storageFromConfig({
      driver: 's3',
      mediaDir: dir,
      s3: { bucket: 'benchproof-media', region: 'eu-west-1', endpoint: 'http://127.0.0.1:9', forcePathStyle: true, accessKeyId: 'k', secretAccessKey: 's' },
    });
    expect(storage.scratchDir()).toBe(path.join(dir, '.scratch'));
  });

  it('refuses S3 without a bucket', () => {
    expect(() => storageFromConfig({ driver: 's3', mediaDir: dir })).toThrow(/needs a bucket/);
  });
});
