import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { clipSchema, type Clip as ClipDto } from '@shared/clips/clip.schema';
import { CLIP_JOB_EXPIRY_CEILING_S, clipJobExpireSeconds, enqueueClip, processClip } from '../../../server/features/clips/clip.job';
import { Clip } from '../../../server/features/clips/clip.model';
import { clipJobBoundS, transcodeTimeoutS } from '../../../server/features/clips/media/limits';
import { startQueue } from '../../../server/jobs/queue';
import { createLogger } from '../../../server/logger';
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

describe('a run that a newer one has replaced', () => {
  const logger = createLogger({ logLevel: 'silent' });

  it.each([
    ['finishes', false],
    ['fails', true],
  ])('cannot change a clip the newer run made ready when it %s late', async (_how, failLate) => {
    const t = await startTestApp(); // no worker: the test runs the two attempts itself
    try {
      const { agent, token, buildId } = await setUp(t);
      const res = await agent.post(`/api/builds/${buildId}/clips`).set('x-csrf-token', token).attach('file', mp4).expect(201);
      const id = res.body.clip.id as number;
      let arrive!: () => void;
      const arrived = new Promise<void>((resolve) => (arrive = resolve));
      let release!: () => void;
      const released = new Promise<void>((resolve) => (release = resolve));
      // The first run stalls with its strip made, as a worker paused for longer than the job's expiry.
      const stale = processClip(
        {
          storage: t.storage,
          logger,
          faultAt: async (stage) => {
            if (stage !== 'stills') return;
            arrive();
            await released;
            if (failLate) throw new Error('simulated failure after the stall');
          },
        },
        id,
        { retryCount: 0, retryLimit: 2 },
      );
      await arrived;
      // pg-boss hands the expired job out again and the second run finishes the clip.
      await processClip({ storage: t.storage, logger }, id, { retryCount: 1, retryLimit: 2 });
      const ready = (await Clip.findByPk(id))!;
      expect(ready).toMatchObject({ status: 'ready', progress: 100, attempts: 2, failureReason: null });
      const thumbnails = path.join(t.mediaDir, 'clips', ready.storagePrefix, 'thumbnails.jpg');
      const written = fs.statSync(thumbnails).mtimeMs;

      release();
      await expect(stale).resolves.toBeUndefined(); // nothing for pg-boss to retry either
      const after = (await Clip.findByPk(id))!;
      expect(after.toJSON()).toEqual(ready.toJSON());
      // Its files are the newer run's, untouched.
      expect(fs.statSync(thumbnails).mtimeMs).toBe(written);
      expect(fs.existsSync(path.join(t.mediaDir, 'clips', ready.storagePrefix, 'poster.jpg'))).toBe(true);
    } finally {
      await t.close();
    }
  });

  it('a duplicate run that starts after the clip is ready leaves it alone', async () => {
    const t = await startTestApp();
    try {
      const { agent, token, buildId } = await setUp(t);
      const res = await agent.post(`/api/builds/${buildId}/clips`).set('x-csrf-token', token).attach('file', mp4).expect(201);
      const id = res.body.clip.id as number;
      await processClip({ storage: t.storage, logger }, id, { retryCount: 0, retryLimit: 2 });
      const ready = (await Clip.findByPk(id))!;
      expect(ready.status).toBe('ready');
      await processClip({ storage: t.storage, logger }, id, { retryCount: 0, retryLimit: 2 });
      expect((await Clip.findByPk(id))!.toJSON()).toEqual(ready.toJSON());
    } finally {
      await t.close();
    }
  });
});

describe('how long pg-boss lets one attempt run', () => {
  it('grows with the clip’s duration, between the queue’s setting and a ceiling under 24 h', () => {
    // A short clip: the queue's own expiry (JOB_EXPIRE_SECONDS) is already longer than its work can take.
    expect(clipJobExpireSeconds(3, 1800)).toBe(1800);
    // Ten minutes: every step at its bound, longer than the transcode's own limit.
    expect(clipJobExpireSeconds(600, 1800)).toBe(clipJobBoundS(600));
    expect(clipJobBoundS(600)).toBeGreaterThan(transcodeTimeoutS(600));
    expect(clipJobExpireSeconds(1200, 1800)).toBeGreaterThan(clipJobExpireSeconds(600, 1800));
    // Two hours would need more than pg-boss accepts (under 24 h): the ceiling.
    expect(clipJobExpireSeconds(2 * 3600, 1800)).toBe(CLIP_JOB_EXPIRY_CEILING_S);
    expect(CLIP_JOB_EXPIRY_CEILING_S).toBeLessThan(24 * 3600);
    // A clip with no known duration gets the queue's setting.
    expect(clipJobExpireSeconds(Number.NaN, 1800)).toBe(1800);
  });

  it('is written on the queued job, from the duration stored with the clip', async () => {
    const t = await startTestApp();
    const queue = await startQueue(t.config); // a queue with no worker, so the jobs stay as queued
    try {
      const { agent, token, buildId } = await setUp(t);
      const res = await agent.post(`/api/builds/${buildId}/clips`).set('x-csrf-token', token).attach('file', mp4).expect(201);
      const id = res.body.clip.id as number;
      const row = (await Clip.findByPk(id))!;
      await row.update({ probe: { ...row.probe!, durationS: 600 } });
      await enqueueClip(queue, id);
      const [rows] = await Clip.sequelize!.query(
        `SELECT EXTRACT(epoch FROM expire_in)::int AS seconds FROM pgboss.job WHERE name = :name AND singleton_key = :key`,
        { replacements: { name: queue.names.clipProcess, key: `clip-${id}` } },
      );
      expect(rows).toEqual([{ seconds: clipJobExpireSeconds(600, t.config.jobs.expireSeconds) }]);
      expect((rows[0] as { seconds: number }).seconds).toBeGreaterThan(t.config.jobs.expireSeconds);
    } finally {
      await queue.boss.stop({ graceful: false, wait: true });
      await t.close();
    }
  });
});
