import crypto from 'node:crypto';
import fs from 'node:fs';
import http from 'node:http';
import type { AddressInfo } from 'node:net';
import os from 'node:os';
import path from 'node:path';
import { HeadObjectCommand, ListMultipartUploadsCommand, ListObjectsV2Command, ListPartsCommand, S3Client } from '@aws-sdk/client-s3';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import request from 'supertest';
import { clipListResponseSchema, uploadClipIdHeader } from '@shared/clips/clip.schema';
import { errorBodySchema } from '@shared/http/error.schema';
import { Clip } from '../../../server/features/clips/clip.model';
import { ClipUpload } from '../../../server/features/clips/clip-upload.model';
import { clipKeys } from '../../../server/features/clips/clips.service';
import { ffmpegDirect, makeDisguisedFile } from '../../support/clips';
import { startS3Fake, type S3Fake } from '../../support/s3-fake';
import { csrfToken, signIn, startTestApp, type TestApp } from '../../support/test-app';
import { cookieHeader, createUpload, cutPatch, eventually, freshBuilder, headUpload, patchUpload } from '../../support/tus';

/*
 * Resumable uploads (tus 1.0.0) end to end through the real app, against both upload stores:
 * the file store under the scratch folder and the S3 store (the s3rver fake). The clip is a real
 * video of random pixels (lossless H.264, about 24 MB), so that 40 % of it is more than one
 * 8 MiB part of the S3 store.
 */

const MiB = 1024 * 1024;
/** The S3 store's part size for a file of this size (its preferred part size, 8 MiB). */
const S3_PART = 8 * MiB;

let work: string;
let videoPath: string;
let video: Buffer;
let htmlPath: string;

beforeAll(async () => {
  work = fs.mkdtempSync(path.join(os.tmpdir(), 'benchproof-tus-'));
  videoPath = path.join(work, 'pump-noise.mp4');
  // Random pixels do not compress: lossless H.264 keeps every one of them.
  await ffmpegDirect([
    '-v', 'error', '-y',
    '-f', 'lavfi', '-i', "nullsrc=s=480x360:r=30:d=3,geq=lum='random(1)*255':cb=128:cr=128",
    '-c:v', 'libx264', '-preset', 'ultrafast', '-qp', '0', '-pix_fmt', 'yuv420p', '-movflags', '+faststart', '-f', 'mp4',
    videoPath,
  ]);
  video = fs.readFileSync(videoPath);
  htmlPath = await makeDisguisedFile('html', work, 'pump-notes.mp4');
}, 120_000);

afterAll(() => {
  if (work) fs.rmSync(work, { recursive: true, force: true });
});

const sha = (b: Buffer) => crypto.createHash('sha256').update(b).digest('hex');

function filesUnder(dir: string): string[] {
  if (!fs.existsSync(dir)) return [];
  return fs.readdirSync(dir, { recursive: true, withFileTypes: true }).filter((e) => e.isFile()).map((e) => path.join(e.parentPath, e.name));
}

function baseUrl(t: TestApp) {
  return `http://127.0.0.1:${(t.server.address() as AddressInfo).port}`;
}

async function newBuild(agent: Awaited<ReturnType<typeof signIn>>, token: string, title: string): Promise<number> {
  const res = await agent.post('/api/builds').set('x-csrf-token', token).send({ title }).expect(201);
  return res.body.build.id as number;
}

/** What each store is, how the test app is told to use it, and how to look inside it. */
interface Driver {
  name: 'local' | 's3';
  env(): Record<string, string>;
  /** Bytes the store holds of an unfinished upload. */
  storedBytes(t: TestApp, urlId: string): Promise<number>;
  /** Everything the store holds for unfinished or finished uploads (files, objects, multipart uploads). */
  leftovers(t: TestApp): Promise<string[]>;
  /** What the store keeps of `sent` bytes after the connection is cut. */
  keptOf(sent: number): number;
}

let fake: S3Fake | null = null;
let s3: S3Client | null = null;

async function s3Leftovers(): Promise<string[]> {
  const objects = await s3!.send(new ListObjectsV2Command({ Bucket: fake!.bucket, Prefix: 'uploads/' }));
  const multipart = await s3!.send(new ListMultipartUploadsCommand({ Bucket: fake!.bucket, Prefix: 'uploads/' }));
  return [...(objects.Contents ?? []).map((o) => `object ${o.Key}`), ...(multipart.Uploads ?? []).map((u) => `multipart ${u.Key}`)];
}

const drivers: Driver[] = [
  {
    name: 'local',
    env: () => ({}),
    storedBytes: async (t, urlId) => fs.statSync(path.join(t.mediaDir, '.scratch', 'uploads', urlId)).size,
    leftovers: async (t) => filesUnder(path.join(t.mediaDir, '.scratch', 'uploads')).map((f) => path.relative(t.mediaDir, f)),
    // The file store writes every byte as it arrives.
    keptOf: (sent) => sent,
  },
  {
    name: 's3',
    env: () => ({
      STORAGE_DRIVER: 's3',
      S3_BUCKET: fake!.bucket,
      S3_REGION: fake!.region,
      S3_ENDPOINT: fake!.endpoint,
      S3_FORCE_PATH_STYLE: '1',
      S3_ACCESS_KEY_ID: fake!.accessKeyId,
      S3_SECRET_ACCESS_KEY: fake!.secretAccessKey,
    }),
    async storedBytes(_t, urlId) {
      const Key = `uploads/${urlId}`;
      const uploads = await s3!.send(new ListMultipartUploadsCommand({ Bucket: fake!.bucket, Prefix: Key }));
      const mp = (uploads.Uploads ?? []).find((u) => u.Key === Key);
      let total = 0;
      if (mp) {
        const parts = await s3!.send(new ListPartsCommand({ Bucket: fake!.bucket, Key, UploadId: mp.UploadId }));
        total += (parts.Parts ?? []).reduce((sum, p) => sum + (p.Size ?? 0), 0);
      }
      const incomplete = await s3!.send(new HeadObjectCommand({ Bucket: fake!.bucket, Key: `${Key}.part` })).catch(() => null);
      return total + (incomplete?.ContentLength ?? 0);
    },
    leftovers: () => s3Leftovers(),
    // The S3 store keeps whole parts; the part being filled when the connection drops is lost.
    keptOf: (sent) => Math.floor(sent / S3_PART) * S3_PART,
  },
];

beforeAll(async () => {
  fake = await startS3Fake();
  s3 = new S3Client({
    region: fake.region,
    endpoint: fake.endpoint,
    forcePathStyle: true,
    credentials: { accessKeyId: fake.accessKeyId, secretAccessKey: fake.secretAccessKey },
    requestChecksumCalculation: 'WHEN_REQUIRED',
    responseChecksumValidation: 'WHEN_REQUIRED',
  });
}, 60_000);

afterAll(async () => {
  s3?.destroy();
  await fake?.stop();
});

describe.each(drivers)('a resumable upload with the $name store', (driver) => {
  let t: TestApp;
  let builder: Awaited<ReturnType<typeof freshBuilder>>;
  let buildId: number;

  beforeAll(async () => {
    t = await startTestApp(driver.env());
    builder = await freshBuilder(t, `tus-${driver.name}`);
    buildId = await newBuild(builder.agent, builder.token, `Resumable uploads, ${driver.name} store (test)`);
  }, 60_000);
  afterAll(async () => {
    await t?.close();
  });

  it('cut off at 40 %, carries on from the offset HEAD gives and becomes a clip of the build, titled from its file name', async () => {
    const created = await createUpload(builder.agent, builder.token, buildId, video.length, 'pump-noise.mp4').expect(201);
    const url = created.headers.location!;
    expect(url).toMatch(new RegExp(`^/api/builds/${buildId}/uploads/[0-9a-f]{32}$`));
    expect(created.headers['tus-resumable']).toBe('1.0.0');
    // tus expiration: the time after which the unfinished upload is gone (24 h by default).
    const expires = Date.parse(created.headers['upload-expires']!);
    expect(Math.abs(expires - (Date.now() + 24 * 3600_000))).toBeLessThan(5 * 60_000);
    const urlId = url.split('/').pop()!;

    const sent = Math.floor(video.length * 0.4);
    const kept = driver.keptOf(sent);
    // Sanity of the fixture: the S3 case keeps at least one whole part, so it really resumes mid-file.
    expect(kept).toBeGreaterThan(0);
    await cutPatch({
      baseUrl: baseUrl(t),
      url,
      cookie: cookieHeader(builder.agent),
      token: builder.token,
      file: video,
      offset: 0,
      send: sent,
      arrived: async () => (await driver.storedBytes(t, urlId).catch(() => 0)) >= kept,
    });

    // The cut request may still hold the upload for a moment; HEAD then answers 423 and is asked again.
    let head: request.Response | undefined;
    expect(
      await eventually(async () => {
        head = await headUpload(builder.agent, url);
        return head.status === 200;
      }),
    ).toBe(true);
    expect(head!.headers['upload-offset']).toBe(String(kept));
    expect(head!.headers['upload-length']).toBe(String(video.length));
    expect(head!.headers['cache-control']).toBe('no-store');

    const done = await patchUpload(builder.agent, builder.token, url, kept, video.subarray(kept)).expect(204);
    expect(done.headers['upload-offset']).toBe(String(video.length));
    const clipId = Number(done.headers[uploadClipIdHeader.toLowerCase()]);
    expect(clipId).toBeGreaterThan(0);

    const list = clipListResponseSchema.parse((await builder.agent.get(`/api/builds/${buildId}/clips`).expect(200)).body);
    const clip = list.items.find((c) => c.id === clipId);
    expect(clip).toMatchObject({ title: 'pump-noise', originalName: 'pump-noise.mp4', sizeBytes: video.length, status: 'uploaded' });
    expect(clip?.probe?.durationS).toBeCloseTo(3, 1);

    // The stored original is the file, byte for byte.
    const row = (await Clip.findByPk(clipId))!;
    const copy = await t.storage.localCopy(clipKeys(row).original);
    try {
      expect(sha(fs.readFileSync(copy.path))).toBe(sha(video));
    } finally {
      await copy.release();
    }

    // A client that lost the last answer asks again and learns the clip.
    const after = await headUpload(builder.agent, url).expect(200);
    expect(after.headers['upload-offset']).toBe(String(video.length));
    expect(after.headers[uploadClipIdHeader.toLowerCase()]).toBe(String(clipId));

    // Nothing of the upload is left in its store, nor in the scratch folder for incoming files.
    expect(await driver.leftovers(t)).toEqual([]);
    expect(filesUnder(path.join(t.mediaDir, '.scratch', 'incoming'))).toEqual([]);
  }, 120_000);

  // ASVS 5.0.0 V5.2.2: the content is checked (magic bytes, then ffprobe), whatever the name says.
  it('a file that is not a video is refused when its last byte arrives, in the words of a one-shot upload, and nothing is kept', async () => {
    const html = fs.readFileSync(htmlPath);
    const oneShot = await builder.agent.post(`/api/builds/${buildId}/clips`).set('x-csrf-token', builder.token).attach('file', htmlPath, 'pump-notes.mp4').expect(415);
    const before = await Clip.count({ where: { buildId } });

    const created = await createUpload(builder.agent, builder.token, buildId, html.length, 'pump-notes.mp4').expect(201);
    const refused = await patchUpload(builder.agent, builder.token, created.headers.location!, 0, html).expect(415);
    expect(errorBodySchema.parse(refused.body)).toEqual(errorBodySchema.parse(oneShot.body));
    expect(refused.body.error.code).toBe('not_a_video');

    expect(await Clip.count({ where: { buildId } })).toBe(before);
    await headUpload(builder.agent, created.headers.location!).expect(404);
    expect(await driver.leftovers(t)).toEqual([]);
    expect(filesUnder(path.join(t.mediaDir, '.scratch', 'incoming'))).toEqual([]);
  }, 60_000);
});

describe.each(drivers)('an unfinished upload with the $name store', (driver) => {
  let t: TestApp;
  let builder: Awaited<ReturnType<typeof freshBuilder>>;
  let buildId: number;

  beforeAll(async () => {
    // Uploads expire after 4 s here, and the sweep runs every second.
    t = await startTestApp({ ...driver.env(), UPLOAD_EXPIRE_SECONDS: '4', UPLOAD_SWEEP_SECONDS: '1' });
    builder = await freshBuilder(t, `tus-expiry-${driver.name}`);
    buildId = await newBuild(builder.agent, builder.token, `Expiring uploads, ${driver.name} store (test)`);
  }, 60_000);
  afterAll(async () => {
    await t?.close();
  });

  it('expires, and the periodic sweep leaves nothing behind: no row, no bytes in the store, no multipart upload', async () => {
    const created = await createUpload(builder.agent, builder.token, buildId, video.length, 'pump-noise.mp4').expect(201);
    const url = created.headers.location!;
    const urlId = url.split('/').pop()!;
    // 40 % arrives, in one whole request (the S3 store keeps it as parts), then nothing more.
    const sent = Math.floor(video.length * 0.4);
    await patchUpload(builder.agent, builder.token, url, 0, video.subarray(0, sent)).expect(204);
    expect(await driver.storedBytes(t, urlId)).toBe(sent);
    expect(await driver.leftovers(t)).not.toEqual([]);

    expect(await eventually(async () => (await ClipUpload.findByPk(urlId)) === null && (await driver.leftovers(t)).length === 0, 20_000)).toBe(true);
    expect(filesUnder(path.join(t.mediaDir, '.scratch'))).toEqual([]);
    await headUpload(builder.agent, url).expect(404);
    const late = await patchUpload(builder.agent, builder.token, url, sent, video.subarray(sent)).expect(404);
    expect(late.body.error.message).toMatch(/start the upload again/);
  }, 60_000);
});

describe('refusals', () => {
  let t: TestApp;
  let builder: Awaited<ReturnType<typeof freshBuilder>>;
  let buildId: number;
  let url: string;

  beforeAll(async () => {
    t = await startTestApp({ UPLOADS_OPEN_PER_BUILDER: '3' });
    builder = await freshBuilder(t, 'tus-refusals');
    buildId = await newBuild(builder.agent, builder.token, 'Refused uploads (test)');
    url = (await createUpload(builder.agent, builder.token, buildId, 1000, 'bench.mp4').expect(201)).headers.location!;
    await patchUpload(builder.agent, builder.token, url, 0, video.subarray(0, 100)).expect(204);
  }, 60_000);
  afterAll(async () => {
    await t?.close();
  });

  const offsetNow = async () => (await headUpload(builder.agent, url).expect(200)).headers['upload-offset'];

  // ASVS 5.0.0 V8.2.2: data-specific access; another builder's build and upload are not theirs (404, as for an unknown id).
  it('another builder can neither start an upload on the build nor ask about or continue one: 404, nothing stored', async () => {
    const other = await signIn(t, 'demo-builder-2');
    const token = await csrfToken(other);
    const rowsBefore = await ClipUpload.count({ where: { buildId } });
    const create = await createUpload(other, token, buildId, 1000, 'intruder.mp4').expect(404);
    expect(create.body.error.code).toBe('not_found');
    await headUpload(other, url).expect(404);
    const patch = await patchUpload(other, token, url, 100, video.subarray(100, 200)).expect(404);
    expect(patch.body.error.code).toBe('not_found');
    await other.delete(url).set('Tus-Resumable', '1.0.0').set('x-csrf-token', token).expect(404);
    expect(await ClipUpload.count({ where: { buildId } })).toBe(rowsBefore);
    expect(await offsetNow()).toBe('100');
  });

  // ASVS 5.0.0 V8.2.1: function-level access; a visitor who is not signed in gets 401.
  it('a visitor who is not signed in is refused with 401, and the upload is unchanged', async () => {
    const visitor = request.agent(t.server);
    const token = await csrfToken(visitor);
    expect((await createUpload(visitor, token, buildId, 1000, 'visitor.mp4').expect(401)).body.error.code).toBe('unauthorized');
    await headUpload(visitor, url).expect(401);
    expect((await patchUpload(visitor, token, url, 100, video.subarray(100, 200)).expect(401)).body.error.code).toBe('unauthorized');
    expect(await offsetNow()).toBe('100');
  });

  // ASVS 5.0.0 V3.5.1: state-changing requests carry the anti-forgery token of the session.
  it('without the CSRF token, creating, continuing and cancelling are refused with 403, and nothing changes', async () => {
    const rowsBefore = await ClipUpload.count({ where: { buildId } });
    expect((await createUpload(builder.agent, null, buildId, 1000, 'forged.mp4').expect(403)).body.error.code).toBe('csrf_invalid');
    expect((await patchUpload(builder.agent, null, url, 100, video.subarray(100, 200)).expect(403)).body.error.code).toBe('csrf_invalid');
    await builder.agent.delete(url).set('Tus-Resumable', '1.0.0').expect(403);
    expect(await ClipUpload.count({ where: { buildId } })).toBe(rowsBefore);
    expect(await offsetNow()).toBe('100');
  });

  // ASVS 5.0.0 V5.2.1: only files of a size the app can process; refused before a byte is stored.
  it('a file larger than a clip may be is refused at creation with 413, in the words of a one-shot upload', async () => {
    const max = t.config.uploads.maxBytes;
    const rowsBefore = await ClipUpload.count({ where: { buildId } });
    const res = await createUpload(builder.agent, builder.token, buildId, max + 1, 'whole-day.mp4').expect(413);
    expect(res.body.error.code).toBe('too_large');
    expect(res.headers.location).toBeUndefined();
    expect(await ClipUpload.count({ where: { buildId } })).toBe(rowsBefore);

    // The one-shot route refuses a body that says it is that large before reading it, with the same words.
    const oneShot = await new Promise<{ status: number; body: string }>((resolve, reject) => {
      const target = new URL(`/api/builds/${buildId}/clips`, baseUrl(t));
      const req = http.request(
        {
          host: target.hostname,
          port: target.port,
          path: target.pathname,
          method: 'POST',
          headers: {
            Cookie: cookieHeader(builder.agent),
            'x-csrf-token': builder.token,
            'Content-Type': 'multipart/form-data; boundary=x',
            'Content-Length': String(max + 1024 * 1024),
          },
        },
        (r) => {
          let body = '';
          r.setEncoding('utf8');
          r.on('data', (c: string) => (body += c));
          r.on('end', () => {
            resolve({ status: r.statusCode ?? 0, body });
            // The body was never sent; the answer came first.
            req.destroy();
          });
        },
      );
      req.on('error', reject);
      req.flushHeaders();
    });
    expect(oneShot.status).toBe(413);
    expect(JSON.parse(oneShot.body)).toEqual(res.body);
  });

  it('a PATCH at the wrong offset is refused with 409 and the real offset, and stores nothing', async () => {
    const res = await patchUpload(builder.agent, builder.token, url, 50, video.subarray(50, 150)).expect(409);
    expect(res.body.error.code).toBe('upload_offset_mismatch');
    expect(res.headers['upload-offset']).toBe('100');
    expect(res.body.error.message).toMatch(/byte 100/);
    expect(await offsetNow()).toBe('100');
  });

  it('a request without Tus-Resumable is refused with 412', async () => {
    const res = await builder.agent.post(`/api/builds/${buildId}/uploads`).set('x-csrf-token', builder.token).set('Upload-Length', '10').expect(412);
    expect(res.body.error.code).toBe('tus_version');
  });

  it('creation without a file name in Upload-Metadata, or of an unknown length, is refused with 400', async () => {
    const noName = await builder.agent
      .post(`/api/builds/${buildId}/uploads`)
      .set({ 'Tus-Resumable': '1.0.0', 'x-csrf-token': builder.token, 'Upload-Length': '10' })
      .expect(400);
    expect(noName.body.error.details[0].path).toBe('Upload-Metadata');
    const deferred = await builder.agent
      .post(`/api/builds/${buildId}/uploads`)
      .set({ 'Tus-Resumable': '1.0.0', 'x-csrf-token': builder.token, 'Upload-Defer-Length': '1', 'Upload-Metadata': 'filename YS5tcDQ=' })
      .expect(400);
    expect(deferred.body.error.details[0].path).toBe('Upload-Length');
  });

  // ASVS 5.0.0 V5.2.4: a limit on how many files one user can have on their way at once.
  it('a builder with as many unfinished uploads as allowed is refused another (409) until one is cancelled', async () => {
    const open = await ClipUpload.count({ where: { ownerId: (await ClipUpload.findByPk(url.split('/').pop()!))!.ownerId, state: 'receiving' } });
    const extra: string[] = [];
    for (let i = open; i < 3; i += 1) {
      extra.push((await createUpload(builder.agent, builder.token, buildId, 1000, `extra-${i}.mp4`).expect(201)).headers.location!);
    }
    const refused = await createUpload(builder.agent, builder.token, buildId, 1000, 'one-too-many.mp4').expect(409);
    expect(refused.body.error.code).toBe('too_many_uploads');
    expect(refused.body.error.message).toMatch(/Finish or cancel one/);

    // Cancelling (tus termination) frees a place, and removes the cancelled upload's bytes.
    const cancelled = extra[0]!;
    await builder.agent.delete(cancelled).set({ 'Tus-Resumable': '1.0.0', 'x-csrf-token': builder.token }).expect(204);
    await headUpload(builder.agent, cancelled).expect(404);
    expect(fs.existsSync(path.join(t.mediaDir, '.scratch', 'uploads', cancelled.split('/').pop()!))).toBe(false);
    await createUpload(builder.agent, builder.token, buildId, 1000, 'now-it-fits.mp4').expect(201);
  });
});
