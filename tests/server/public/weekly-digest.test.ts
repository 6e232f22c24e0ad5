import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createLogger } from '../../../server/logger';
import { queueWeeklyDigests, startWeeklyDigest, WEEKLY_DIGEST_CRON, weeklyDigestQueueName } from '../../../server/features/public/weekly-digest.job';
import { makeTestClip } from '../../support/clips';
import { sessionFor, type Session } from '../../support/matrix-fixtures';
import { makeReviewFixture, publishThroughReview, sessionWithRole, type ReviewFixture } from '../../support/review-fixtures';
import { startTestApp, type TestApp } from '../../support/test-app';

let t: TestApp;
let work: string;
let owner: Session;
let moderator: Session;
let f: ReviewFixture;

beforeAll(async () => {
  work = fs.mkdtempSync(path.join(os.tmpdir(), 'benchproof-digest-'));
  const clipFile = await makeTestClip({ seconds: 2, format: 'mp4-h264', dir: work });
  t = await startTestApp({}, { jobs: true, mail: true });
  owner = await sessionFor(t, 'owner');
  moderator = await sessionFor(t, 'moderator');
  f = await makeReviewFixture(owner, { clipFile, title: 'Digest test: this week' });
  await publishThroughReview(owner, moderator, f);
}, 180_000);

afterAll(async () => {
  await t?.close();
  if (work) fs.rmSync(work, { recursive: true, force: true });
});

const send = (s: Session, verb: 'post' | 'patch', url: string, body: object = {}) => s.agent[verb](url).set('x-csrf-token', s.token).send(body);

describe('the weekly digest', () => {
  it('goes to readers who asked for it, listing what the builders they follow published this week', async () => {
    const builderId = (await owner.agent.get('/api/me').expect(200)).body.user.id as number;
    const keen = await sessionWithRole(t, 'follower', 'digest-on');
    const quiet = await sessionWithRole(t, 'follower', 'digest-off');
    for (const s of [keen, quiet]) await send(s, 'post', `/api/builders/${builderId}/follow`).expect(201);
    await send(keen, 'patch', '/api/me/preferences', { weeklyDigest: true }).expect(200);

    expect(await queueWeeklyDigests({ config: t.config, queue: t.queue })).toBeGreaterThanOrEqual(1);
    const [mail] = await t.smtp.waitFor((m) => m.to.includes(keen.email) && m.subject.startsWith('This week on Benchproof'));
    expect(mail!.text).toContain(`Ines Calloway: "${f.story.title}"`);
    expect(mail!.text).toContain(`${t.config.publicUrl}/stories/${f.story.id}`);
    expect(mail!.html).toContain(`href="${t.config.publicUrl}/stories/${f.story.id}"`);
    expect(t.smtp.messages.some((m) => m.to.includes(quiet.email))).toBe(false);
  }, 60_000);

  it('sends nothing when the week holds nothing new', async () => {
    const reader = await sessionWithRole(t, 'follower', 'digest-later');
    const builderId = (await owner.agent.get('/api/me').expect(200)).body.user.id as number;
    await send(reader, 'post', `/api/builders/${builderId}/follow`).expect(201);
    await send(reader, 'patch', '/api/me/preferences', { weeklyDigest: true }).expect(200);
    const muchLater = new Date(Date.now() + 30 * 24 * 60 * 60 * 1000);
    expect(await queueWeeklyDigests({ config: t.config, queue: t.queue, now: muchLater })).toBe(0);
  });

  it('is scheduled on the job queue for Monday mornings', async () => {
    const digest = await startWeeklyDigest(t.config, t.queue!, { logger: createLogger(t.config) });
    try {
      const schedules = await t.queue!.boss.getSchedules();
      expect(schedules.find((s) => s.name === weeklyDigestQueueName(t.config))).toMatchObject({ cron: WEEKLY_DIGEST_CRON });
    } finally {
      await digest.stop();
      await t.queue!.boss.unschedule(weeklyDigestQueueName(t.config));
    }
  });
});
