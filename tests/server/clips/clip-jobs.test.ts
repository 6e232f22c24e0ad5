import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { clipSchema, type Clip as ClipDto } from '@shared/clips/clip.schema';
import { Clip } from '../../../server/features/clips/clip.model';
import { makeTestClip } from '../../support/clips';
import { csrfToken, signIn, startTestApp, type TestApp } from '../../support/test-app';

let work: string;
let mkv: string;
let mp4: string;
beforeAll(async () => {
  work = fs.mkdtempSync(path.join(os.tmpdir(), 'benchproof-jobs-'));
  [mkv, mp4] = await Promise.all([
    makeTestClip({ seconds: 3, format: 'mkv-mpeg4', dir: work }),
    makeTestClip({ seconds: 3, format: 'mp4-h264', dir: work }),
  ]);
}, 60_000);
afterAll(() => fs.rmSync(work, { recursive: true, force: true }));

async function setUp(t: TestApp) {
  const agent = await signIn(t, 'demo-builder');
  const token = await csrfToken(agent);
  const b = await agent.post('/api/builds').set('x-csrf-token', token).send({ title: 'Job fault check' }).expect(201);
  return { agent, token, buildId: b.body.build.id as number };
}

async function waitFor(agent: Awaited<ReturnType<typeof signIn>>, id: number, done: (c: ClipDto) => boolean, ms = 60_000) {
  const end = Date.now() + ms;
  for (;;) {
    const clip = clipSchema.parse((await agent.get(`/api/clips/${id}`).expect(200)).body.clip);
    if (done(clip)) return clip;
    if (Date.now() > end) throw new Error(`clip ${id} stuck at ${clip.status}`);
    await new Promise((r) => setTimeout(r, 200));
  }
}

describe('processing survives faults', () => {
  it('a job that dies during the transcode is retried and the clip ends ready', async () => {
    const crashes: number[] = [];
    const t = await startTestApp({}, {
      jobs: true,
      faultAt: (stage, _clipId, attempt) => {
        if (stage === 'web-copy' && attempt === 0) {
          crashes.push(attempt);
          throw new Error('simulated worker crash');
        }
      },
    });
    try {
      const { agent, token, buildId } = await setUp(t);
      const res = await agent.post(`/api/builds/${buildId}/clips`).set('x-csrf-token', token).attach('file', mkv).expect(201);
      const ready = await waitFor(agent, res.body.clip.id, (c) => c.status === 'ready' || c.status === 'failed', 90_000);
      expect(ready.status).toBe('ready');
      expect(crashes).toEqual([0]);
      expect((await Clip.findByPk(ready.id))!.attempts).toBe(2);
    } finally {
      await t.close();
    }
  });

  it('when every attempt fails the clip ends failed with a reason, and the original is kept', async () => {
    const t = await startTestApp({}, {
      jobs: true,
      faultAt: (stage) => {
        if (stage === 'stills') throw new Error('disk full (simulated)');
      },
    });
    try {
      const { agent, token, buildId } = await setUp(t);
      const res = await agent.post(`/api/builds/${buildId}/clips`).set('x-csrf-token', token).attach('file', mp4).expect(201);
      const failed = await waitFor(agent, res.body.clip.id, (c) => c.status === 'failed', 90_000);
      // The cause stays in the server log; the person is told what happened, not our internals.
      expect(failed.failureReason).toMatch(/internal error/);
      expect(failed.failureReason).not.toMatch(/disk full/);
      expect(failed.failureReason).toMatch(/original is kept/);
      const row = (await Clip.findByPk(failed.id))!;
      expect(row.attempts).toBe(3); // first try + JOB_RETRY_LIMIT=2 retries
      expect(fs.existsSync(path.join(t.mediaDir, 'clips', row.storagePrefix, 'original'))).toBe(true);
    } finally {
      await t.close();
    }
  });

  it('a clip a crashed server left in processing is picked up again and ends ready', async () => {
    // Upload with no worker running, as if the server died right after accepting the file.
    const first = await startTestApp();
    const { agent, token, buildId } = await setUp(first);
    const res = await agent.post(`/api/builds/${buildId}/clips`).set('x-csrf-token', token).attach('file', mp4).expect(201);
    const id = res.body.clip.id as number;
    await Clip.update({ status: 'processing', progress: 40 }, { where: { id } });
    await Clip.sequelize!.query(`UPDATE clips SET updated_at = now() - interval '10 minutes' WHERE id = ${id}`);
    // The new server shares the media folder of the dead one.
    const second = await startTestApp({ MEDIA_DIR: first.mediaDir }, { jobs: true });
    try {
      const agent2 = await signIn(second, 'demo-builder');
      const ready = await waitFor(agent2, id, (c) => c.status === 'ready', 60_000);
      expect(ready.progress).toBe(100);
    } finally {
      await second.close();
      await first.close();
    }
  });
});
