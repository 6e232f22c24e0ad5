import crypto from 'node:crypto';
import fs from 'node:fs';
import fsp from 'node:fs/promises';
import os from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { localStorage } from '../../../server/storage/local-storage';
import { s3Storage } from '../../../server/storage/s3-storage';
import { MediaStoreFull, withSizeGuard } from '../../../server/storage/size-guard';
import type { Storage } from '../../../server/storage/storage';
import { startS3Fake, type S3Fake } from '../../support/s3-fake';

/*
 * The media store's size guard: a write that would take the store past its cap, or the local
 * disk under its free-space floor, is refused before anything is stored, with the errno of a
 * full quota (so routes answer 507 storage_full). OWASP ASVS 5.0 V2.4 and V15.2.
 */

let root: string;
let fake: S3Fake;
let s3Scratch: string;

beforeAll(async () => {
  root = await fsp.mkdtemp(path.join(os.tmpdir(), 'benchproof-guard-'));
  fake = await startS3Fake();
  s3Scratch = await fsp.mkdtemp(path.join(os.tmpdir(), 'benchproof-guard-s3-'));
}, 60_000);
afterAll(async () => {
  await fake?.stop();
  await fsp.rm(root, { recursive: true, force: true });
  await fsp.rm(s3Scratch, { recursive: true, force: true });
});

async function put(storage: Storage, key: string, size: number) {
  const file = path.join(storage.scratchDir(), `put-${crypto.randomUUID()}`);
  await fsp.writeFile(file, Buffer.alloc(size, 7));
  try {
    await storage.putFile(key, file, { contentType: 'image/jpeg' });
  } finally {
    await fsp.rm(file, { force: true });
  }
}

const stores: { name: string; make(maxBytes: number): Storage }[] = [
  {
    name: 'local',
    make: (maxBytes) => withSizeGuard(localStorage(fs.mkdtempSync(path.join(root, 'store-'))), { maxBytes, minFreeBytes: 0 }),
  },
  {
    name: 's3',
    make: (maxBytes) =>
      withSizeGuard(
        s3Storage({
          bucket: fake.bucket,
          region: fake.region,
          endpoint: fake.endpoint,
          forcePathStyle: true,
          accessKeyId: fake.accessKeyId,
          secretAccessKey: fake.secretAccessKey,
          scratchDir: s3Scratch,
          prefix: `guard-${crypto.randomBytes(4).toString('hex')}`,
        }),
        { maxBytes, minFreeBytes: 0 },
      ),
  },
];

describe.each(stores)('a $name store with a 1,000-byte cap', ({ make }) => {
  it('takes files up to the cap and refuses the one that would pass it, storing nothing of it', async () => {
    const store = make(1000);
    await put(store, 'clips/a/frames/1.jpg', 400);
    await put(store, 'clips/a/frames/2.jpg', 600);
    const refused = put(store, 'clips/a/frames/3.jpg', 1);
    await expect(refused).rejects.toBeInstanceOf(MediaStoreFull);
    await expect(refused).rejects.toMatchObject({ code: 'EDQUOT' });
    expect(await store.stat('clips/a/frames/3.jpg')).toBeNull();
  });

  it('counts what delete and deletePrefix free, so room comes back', async () => {
    const store = make(1000);
    await put(store, 'clips/b/frames/1.jpg', 500);
    await put(store, 'clips/b/frames/2.jpg', 500);
    await expect(put(store, 'clips/c/original', 100)).rejects.toBeInstanceOf(MediaStoreFull);
    await store.delete('clips/b/frames/1.jpg');
    await put(store, 'clips/c/original', 100);
    await expect(put(store, 'clips/c/web.mp4', 401)).rejects.toBeInstanceOf(MediaStoreFull);
    await store.deletePrefix('clips/b');
    await put(store, 'clips/c/web.mp4', 401);
    expect(await store.stat('clips/c/web.mp4')).toEqual({ size: 401 });
  });

  it('replacing a file counts the difference, not both', async () => {
    const store = make(1000);
    await put(store, 'clips/d/poster.jpg', 700);
    await put(store, 'clips/d/poster.jpg', 900);
    expect(await store.stat('clips/d/poster.jpg')).toEqual({ size: 900 });
  });
});

describe('the free-space floor of a local store', () => {
  it('refuses a write that would leave less than the floor free on the disk', async () => {
    const dir = fs.mkdtempSync(path.join(root, 'floor-'));
    const { bavail, bsize } = fs.statfsSync(dir);
    const free = bavail * bsize;
    // A floor just above what the disk has free: any write is refused.
    const tight = withSizeGuard(localStorage(dir), { maxBytes: 0, minFreeBytes: free + 1, diskDir: dir });
    await expect(put(tight, 'clips/e/poster.jpg', 10)).rejects.toBeInstanceOf(MediaStoreFull);
    expect(await tight.stat('clips/e/poster.jpg')).toBeNull();
    // A floor well under it: the write goes through.
    const roomy = withSizeGuard(localStorage(dir), { maxBytes: 0, minFreeBytes: 1024, diskDir: dir });
    await put(roomy, 'clips/e/poster.jpg', 10);
    expect(await roomy.stat('clips/e/poster.jpg')).toEqual({ size: 10 });
  });
});

describe('a store written by another process', () => {
  it('is counted again after the recount interval, so its writes count against the cap', async () => {
    const dir = fs.mkdtempSync(path.join(root, 'shared-'));
    const ours = withSizeGuard(localStorage(dir), { maxBytes: 1000, minFreeBytes: 0, recountMs: 0 });
    const theirs = localStorage(dir);
    await put(ours, 'clips/f/1.jpg', 300);
    await put(theirs, 'clips/f/2.jpg', 650);
    await expect(put(ours, 'clips/f/3.jpg', 100)).rejects.toBeInstanceOf(MediaStoreFull);
    expect(await ours.usedBytes()).toBe(950);
  });
});
