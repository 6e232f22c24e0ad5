import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { clipSchema, type Clip as ClipDto } from '@shared/clips/clip.schema';
import { makeTestClip } from '../../support/clips';
import { csrfToken, signIn, startTestApp, type TestApp } from '../../support/test-app';

/*
 * Stills for the builder and moderators are a bounded cache per clip: the stills at the clip's
 * moments stay, the others (looking around the footage) are kept up to STILLS_PER_CLIP, the
 * oldest removed first. And the media store's size cap refuses an upload with 507 and leaves
 * nothing behind. OWASP ASVS 5.0 V2.4, V15.2.
 */

let t: TestApp;
let capped: TestApp;
let work: string;
let mp4: string;

beforeAll(async () => {
  work = fs.mkdtempSync(path.join(os.tmpdir(), 'benchproof-still-cache-'));
  mp4 = await makeTestClip({ seconds: 3, format: 'mp4-h264', dir: work });
  t = await startTestApp({ STILLS_PER_CLIP: '3' }, { jobs: true });
  // A cap far under one clip: every upload passes it.
  capped = await startTestApp({ MEDIA_MAX_BYTES: '1000' });
}, 120_000);

afterAll(async () => {
  await t?.close();
  await capped?.close();
  fs.rmSync(work, { recursive: true, force: true });
});

function filesUnder(dir: string): string[] {
  if (!fs.existsSync(dir)) return [];
  return fs
    .readdirSync(dir, { recursive: true, withFileTypes: true })
    .filter((e) => e.isFile())
    .map((e) => path.relative(dir, path.join(e.parentPath, e.name)));
}

async function newBuild(app: TestApp) {
  const agent = await signIn(app, 'demo-builder');
  const token = await csrfToken(agent);
  const res = await agent.post('/api/builds').set('x-csrf-token', token).send({ title: 'Still cache check (test)' }).expect(201);
  return { agent, token, buildId: res.body.build.id as number };
}

describe('stills looked at around the footage', () => {
  it('are kept up to the limit per clip, oldest removed first; the stills at moments stay', async () => {
    const { agent, token, buildId } = await newBuild(t);
    const created = clipSchema.parse((await agent.post(`/api/builds/${buildId}/clips`).set('x-csrf-token', token).attach('file', mp4, 'pump.mp4').expect(201)).body.clip);
    let clip: ClipDto = created;
    for (const end = Date.now() + 60_000; clip.status !== 'ready'; ) {
      if (Date.now() > end || clip.status === 'failed') throw new Error(`clip stayed ${clip.status}`);
      await new Promise((r) => setTimeout(r, 200));
      clip = clipSchema.parse((await agent.get(`/api/clips/${clip.id}`).expect(200)).body.clip);
    }
    await agent.post(`/api/clips/${clip.id}/moments`).set('x-csrf-token', token).send({ atMs: 2000, label: 'Rotor height' }).expect(201);

    const frames = () => filesUnder(t.mediaDir).filter((f) => f.includes('/frames/')).map((f) => path.basename(f)).sort();
    await agent.get(`/api/clips/${clip.id}/frame?t=2.000`).expect(200);
    for (const s of ['0.100', '0.200', '0.300', '0.400', '0.500']) {
      await agent.get(`/api/clips/${clip.id}/frame?t=${s}`).expect(200).expect('content-type', 'image/jpeg');
    }
    // The moment's still, and the three newest of the others.
    expect(frames()).toEqual(['2000.jpg', '300.jpg', '400.jpg', '500.jpg']);

    // An evicted still is cut again when asked for, and the oldest other one makes room.
    await agent.get(`/api/clips/${clip.id}/frame?t=0.100`).expect(200);
    expect(frames()).toEqual(['100.jpg', '2000.jpg', '400.jpg', '500.jpg']);
  });
});

describe('a media store at its size cap', () => {
  it('refuses an upload with 507 storage_full and keeps nothing of it', async () => {
    const { agent, token, buildId } = await newBuild(capped);
    const res = await agent.post(`/api/builds/${buildId}/clips`).set('x-csrf-token', token).attach('file', mp4, 'pump.mp4');
    expect(res.status).toBe(507);
    expect(res.body.error.code).toBe('storage_full');
    expect(res.body.error.message).toMatch(/full/);
    expect((await agent.get(`/api/builds/${buildId}/clips`).expect(200)).body.items).toEqual([]);
    expect(filesUnder(capped.mediaDir).filter((f) => !f.startsWith('.scratch'))).toEqual([]);
    expect(filesUnder(path.join(capped.mediaDir, '.scratch', 'incoming'))).toEqual([]);
  });
});
