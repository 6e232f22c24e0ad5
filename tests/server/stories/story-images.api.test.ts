import { execFile } from 'node:child_process';
import fs from 'node:fs';
import fsp from 'node:fs/promises';
import os from 'node:os';
import path from 'node:path';
import { promisify } from 'node:util';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import request from 'supertest';
import { errorBodySchema } from '@shared/http/error.schema';
import { storyImageListResponseSchema, storyImageResponseSchema, storyResponseSchema, type StoryImage } from '@shared/stories/story.schema';
import { mediaBinaries } from '../../../server/features/clips/media/binaries';
import { StoryImage as StoryImageRow } from '../../../server/features/stories/story.model';
import { makeDisguisedFile, makeTruncatedCopy, makeZeroByteFile } from '../../support/clips';
import { csrfToken, signIn, startTestApp, type TestApp } from '../../support/test-app';

const run = promisify(execFile);

type Agent = Awaited<ReturnType<typeof signIn>>;
interface Session {
  agent: Agent;
  token: string;
}

let t: TestApp;
let dir: string;
let owner: Session;
let otherBuilder: Session;
let moderator: Session;
let follower: Session;
let storyId: number;
let png: string;
let jpeg: string;
let webp: string;

async function session(app: TestApp, login: string): Promise<Session> {
  const agent = await signIn(app, login);
  return { agent, token: await csrfToken(agent) };
}

/** A still of ffmpeg's test pattern, encoded by the bundled ffmpeg. */
async function makeImage(name: string, size: string, codec: string[] = []): Promise<string> {
  const file = path.join(dir, name);
  await run(mediaBinaries().ffmpeg, ['-v', 'error', '-y', '-f', 'lavfi', '-i', `testsrc2=size=${size}`, '-frames:v', '1', ...codec, file]);
  return file;
}

async function newStory(app: TestApp, s: Session): Promise<number> {
  const build = await s.agent.post('/api/builds').set('x-csrf-token', s.token).send({ title: 'Image tests' }).expect(201);
  const story = await s.agent.post(`/api/builds/${build.body.build.id}/stories`).set('x-csrf-token', s.token).send({ title: 'With pictures' }).expect(201);
  return storyResponseSchema.parse(story.body).story.id;
}

function upload(s: Session, id: number, file: string, name: string, alt?: string) {
  const req = s.agent.post(`/api/stories/${id}/images`).set('x-csrf-token', s.token);
  if (alt !== undefined) req.field('alt', alt);
  return req.attach('file', file, name);
}

/** Every file under the media folder, scratch space included. */
function filesUnder(root: string): string[] {
  if (!fs.existsSync(root)) return [];
  return fs.readdirSync(root, { recursive: true, withFileTypes: true })
    .filter((e) => e.isFile())
    .map((e) => path.relative(root, path.join(e.parentPath, e.name)))
    .sort();
}

beforeAll(async () => {
  t = await startTestApp();
  dir = fs.mkdtempSync(path.join(os.tmpdir(), 'benchproof-story-images-'));
  owner = await session(t, 'demo-builder');
  otherBuilder = await session(t, 'demo-builder-2');
  moderator = await session(t, 'demo-moderator');
  follower = await session(t, 'demo-follower');
  storyId = await newStory(t, owner);
  [png, jpeg, webp] = await Promise.all([
    makeImage('pump.png', '64x48'),
    makeImage('pump.jpg', '640x480'),
    makeImage('pump.webp', '80x60', ['-c:v', 'libwebp']),
  ]);
});
afterAll(async () => {
  await t.close();
  fs.rmSync(dir, { recursive: true, force: true });
});

describe('uploading an image into a story', () => {
  it('a PNG is stored under a generated key and served back as it was, privately', async () => {
    const res = await upload(owner, storyId, png, 'My Pump <script>.png').expect(201);
    const image = storyImageResponseSchema.parse(res.body).image;
    expect(image).toMatchObject({ storyId, contentType: 'image/png', width: 64, height: 48, sizeBytes: fs.statSync(png).size, url: `/api/story-images/${image.id}`, alt: '' });
    expect(image.markdown).toBe(`![](/api/story-images/${image.id})`);
    const row = await StoryImageRow.findByPk(image.id);
    expect(row!.storageKey).toMatch(/^stories\/[0-9a-f-]{36}\/image\.png$/);
    expect(filesUnder(t.mediaDir).some((f) => f.includes('Pump') || f.includes('script'))).toBe(false);

    const served = await owner.agent.get(image.url).buffer(true).expect(200);
    expect(served.headers['content-type']).toBe('image/png');
    expect(served.headers['x-content-type-options']).toBe('nosniff');
    expect(served.headers['cache-control']).toBe('private, max-age=3600');
    expect(served.headers['content-disposition']).toBe('inline');
    expect(Buffer.compare(served.body as Buffer, fs.readFileSync(png))).toBe(0);
  });

  it('a JPEG and a WebP are accepted; the alt text is kept and made safe to paste', async () => {
    const j = storyImageResponseSchema.parse((await upload(owner, storyId, jpeg, 'IMG_0001.JPG', 'Rotor [outer]\nin the body').expect(201)).body).image;
    expect(j).toMatchObject({ contentType: 'image/jpeg', width: 640, height: 480, alt: 'Rotor [outer] in the body' });
    expect(j.markdown).toBe(`![Rotor \\[outer\\] in the body](/api/story-images/${j.id})`);
    const w = storyImageResponseSchema.parse((await upload(owner, storyId, webp, 'x.webp').expect(201)).body).image;
    expect(w).toMatchObject({ contentType: 'image/webp', width: 80, height: 60 });
    const list = storyImageListResponseSchema.parse((await moderator.agent.get(`/api/stories/${storyId}/images`).expect(200)).body);
    expect(list.items.map((i: StoryImage) => i.id)).toEqual(expect.arrayContaining([j.id, w.id]));
  });

  describe('refusals leave nothing behind', () => {
    const refused = async (file: string, name: string, status: number, code: string) => {
      const before = filesUnder(t.mediaDir);
      const rows = await StoryImageRow.count({ where: { storyId } });
      const res = await upload(owner, storyId, file, name).expect(status);
      const error = errorBodySchema.parse(res.body).error;
      expect(error.code).toBe(code);
      expect(error.details.map((d) => d.path)).toContain('file');
      expect(filesUnder(t.mediaDir)).toEqual(before);
      expect(await StoryImageRow.count({ where: { storyId } })).toBe(rows);
      return error;
    };

    it('an HTML page named .png is refused by its bytes', async () => {
      const html = await makeDisguisedFile('html', dir, 'photo.png');
      const error = await refused(html, 'photo.png', 415, 'not_an_image');
      expect(error.message).toMatch(/HTML page/);
    });

    it('a JPEG renamed .png is still a JPEG (the name is ignored), and a ZIP is refused', async () => {
      const renamed = path.join(dir, 'really-a-jpeg.png');
      await fsp.copyFile(jpeg, renamed);
      const res = await upload(owner, storyId, renamed, 'really-a-jpeg.png').expect(201);
      expect(res.body.image.contentType).toBe('image/jpeg');
      await refused(await makeDisguisedFile('zip', dir, 'archive.jpg'), 'archive.jpg', 415, 'not_an_image');
    });

    it('an empty file is refused', async () => {
      await refused(await makeZeroByteFile(dir, 'empty.png'), 'empty.png', 400, 'empty_file');
    });

    it('a truncated PNG and a truncated JPEG are refused as damaged', async () => {
      await refused(await makeTruncatedCopy(png, 0.6), 'cut.png', 422, 'damaged_image');
      await refused(await makeTruncatedCopy(jpeg, 0.5), 'cut.jpg', 422, 'damaged_image');
    });

    it('a PNG signature in front of anything else is refused as damaged', async () => {
      const fake = path.join(dir, 'fake.png');
      await fsp.writeFile(fake, Buffer.concat([Buffer.from([0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a]), Buffer.from('<script>alert(1)</script>'.repeat(20))]));
      await refused(fake, 'fake.png', 422, 'damaged_image');
    });

    it('a file larger than the limit is refused (with a low limit set for the test)', async () => {
      const small = await startTestApp({ STORY_IMAGE_MAX_BYTES: '2000' });
      try {
        const s = await session(small, 'demo-builder');
        const id = await newStory(small, s);
        const big = await makeImage('big.png', '320x240');
        expect(fs.statSync(big).size).toBeGreaterThan(2000);
        const before = filesUnder(small.mediaDir);
        const res = await upload(s, id, big, 'big.png').expect(413);
        expect(errorBodySchema.parse(res.body).error.code).toBe('too_large');
        expect(filesUnder(small.mediaDir)).toEqual(before);
        expect(await StoryImageRow.count({ where: { storyId: id } })).toBe(0);
        await upload(s, id, png, 'small.png').expect(201);
      } finally {
        await small.close();
      }
    });
  });
});

describe('who may upload and see story images', () => {
  it('only the builder uploads; reviewers see; other builders and followers get 404, visitors 401', async () => {
    const image = storyImageResponseSchema.parse((await upload(owner, storyId, png, 'p.png').expect(201)).body).image;
    await upload(otherBuilder, storyId, png, 'p.png').expect(404);
    await upload(moderator, storyId, png, 'p.png').expect(403);
    await upload(follower, storyId, png, 'p.png').expect(403);
    await moderator.agent.get(image.url).expect(200);
    await otherBuilder.agent.get(image.url).expect(404);
    await follower.agent.get(image.url).expect(404);
    await otherBuilder.agent.get(`/api/stories/${storyId}/images`).expect(404);
    await request(t.app).get(image.url).expect(401);
    await owner.agent.get('/api/story-images/999999999').expect(404);
  });
});

describe('deleting a draft with images', () => {
  it('removes its image files from storage too', async () => {
    const id = await newStory(t, owner);
    const a = storyImageResponseSchema.parse((await upload(owner, id, png, 'a.png').expect(201)).body).image;
    const b = storyImageResponseSchema.parse((await upload(owner, id, jpeg, 'b.jpg').expect(201)).body).image;
    const keys = (await StoryImageRow.findAll({ where: { id: [a.id, b.id] } })).map((r) => r.storageKey);
    for (const key of keys) expect(await t.storage.stat(key)).not.toBeNull();
    await owner.agent.delete(`/api/stories/${id}`).set('x-csrf-token', owner.token).expect(204);
    for (const key of keys) {
      expect(await t.storage.stat(key)).toBeNull();
      expect(fs.existsSync(path.join(t.mediaDir, path.dirname(key)))).toBe(false);
    }
    await owner.agent.get(a.url).expect(404);
  });
});
