import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { followListResponseSchema, followResponseSchema, preferencesResponseSchema } from '@shared/public/follows.schema';
import { publicBuilderProfileSchema } from '@shared/public/public-build.schema';
import { publicStoryListResponseSchema } from '@shared/public/public-story.schema';
import { AuditEntry } from '../../../server/features/audit/audit.model';
import { makeTestClip } from '../../support/clips';
import { sessionFor, type Session } from '../../support/matrix-fixtures';
import { makeReviewFixture, publishThroughReview, sessionWithRole } from '../../support/review-fixtures';
import { startTestApp, type TestApp } from '../../support/test-app';

let t: TestApp;
let work: string;
let clipFile: string;
let owner: Session;
let moderator: Session;
let builderId: number;

const send = (s: Session, verb: 'post' | 'patch' | 'delete', url: string, body?: object) => {
  const req = s.agent[verb](url).set('x-csrf-token', s.token);
  return body === undefined ? req : req.send(body);
};

beforeAll(async () => {
  work = fs.mkdtempSync(path.join(os.tmpdir(), 'benchproof-follows-'));
  clipFile = await makeTestClip({ seconds: 2, format: 'mp4-h264', dir: work });
  t = await startTestApp({}, { jobs: true, mail: true });
  owner = await sessionFor(t, 'owner');
  moderator = await sessionFor(t, 'moderator');
  builderId = (await owner.agent.get('/api/me').expect(200)).body.user.id;
}, 120_000);

afterAll(async () => {
  await t?.close();
  if (work) fs.rmSync(work, { recursive: true, force: true });
});

describe('following a builder', () => {
  it('follows (201), following again changes nothing (200), unfollowing twice is harmless (204)', async () => {
    const reader = await sessionWithRole(t, 'follower', 'follow-reader');
    const first = await send(reader, 'post', `/api/builders/${builderId}/follow`);
    expect(first.status).toBe(201);
    expect(followResponseSchema.parse(first.body).follow).toMatchObject({ builder: { id: builderId, login: 'demo-builder', displayName: 'Ines Calloway' }, emailOnPublish: true });
    const again = await send(reader, 'post', `/api/builders/${builderId}/follow`);
    expect(again.status).toBe(200);
    expect(again.body.follow.since).toBe(first.body.follow.since);

    const list = followListResponseSchema.parse((await reader.agent.get('/api/me/follows').expect(200)).body);
    expect(list.items.map((i) => i.builder.id)).toEqual([builderId]);
    const profile = publicBuilderProfileSchema.parse((await reader.agent.get('/api/public/builders/demo-builder').expect(200)).body);
    expect(profile).toMatchObject({ following: true, emailOnPublish: true });

    expect((await send(reader, 'delete', `/api/builders/${builderId}/follow`)).status).toBe(204);
    expect((await send(reader, 'delete', `/api/builders/${builderId}/follow`)).status).toBe(204);
    expect(followListResponseSchema.parse((await reader.agent.get('/api/me/follows').expect(200)).body).items).toEqual([]);
    expect((await reader.agent.get('/api/public/builders/demo-builder').expect(200)).body.following).toBe(false);
  });

  it('counts followers on the profile', async () => {
    const before = (await owner.agent.get('/api/public/builders/demo-builder').expect(200)).body.followerCount as number;
    const reader = await sessionWithRole(t, 'follower', 'count-reader');
    await send(reader, 'post', `/api/builders/${builderId}/follow`).expect(201);
    expect((await owner.agent.get('/api/public/builders/demo-builder').expect(200)).body.followerCount).toBe(before + 1);
    // A builder's own profile does not ask whether they follow themselves.
    expect((await owner.agent.get('/api/public/builders/demo-builder').expect(200)).body.following).toBeNull();
  });

  it('cannot follow yourself, an account that does not build, or nobody; and needs a signed-in account', async () => {
    const self = await send(owner, 'post', `/api/builders/${builderId}/follow`);
    expect(self.status).toBe(400);
    expect(self.body.error).toMatchObject({ code: 'cannot_follow_self', details: [{ path: 'builderId' }] });
    const reader = await sessionWithRole(t, 'follower', 'plain-reader');
    const other = await sessionWithRole(t, 'follower', 'other-reader');
    expect((await send(reader, 'post', `/api/builders/${other.userId}/follow`)).status).toBe(404);
    expect((await send(reader, 'post', '/api/builders/999999999/follow')).status).toBe(404);
    const anonymous = await sessionFor(t, 'anonymous');
    expect((await send(anonymous, 'post', `/api/builders/${builderId}/follow`)).status).toBe(401);
    expect((await anonymous.agent.get('/api/me/follows')).status).toBe(401);
  });

  it('turns mail about a builder off and on, with an audit line', async () => {
    const reader = await sessionWithRole(t, 'follower', 'mail-switch');
    await send(reader, 'post', `/api/builders/${builderId}/follow`).expect(201);
    const off = await send(reader, 'patch', `/api/me/follows/${builderId}`, { emailOnPublish: false });
    expect(off.status).toBe(200);
    expect(off.body.follow.emailOnPublish).toBe(false);
    expect(await AuditEntry.count({ where: { actorId: reader.userId, action: 'follow.unsubscribe', subjectId: builderId } })).toBe(1);
    const bad = await send(reader, 'patch', `/api/me/follows/${builderId}`, { emailOnPublish: 'no' });
    expect(bad.status).toBe(400);
    expect(bad.body.error.details[0].path).toBe('emailOnPublish');
    expect((await send(reader, 'patch', '/api/me/follows/999999999', { emailOnPublish: true })).status).toBe(404);
  });
});

describe('a reader’s preferences', () => {
  it('starts as figures as entered and no digest, and keeps what is changed', async () => {
    const reader = await sessionWithRole(t, 'follower', 'prefs');
    expect(preferencesResponseSchema.parse((await reader.agent.get('/api/me/preferences').expect(200)).body).preferences).toEqual({ units: null, weeklyDigest: false, unitSystem: null, temperatureScale: null });
    expect((await send(reader, 'patch', '/api/me/preferences', { units: 'metric' }).expect(200)).body.preferences).toEqual({ units: 'metric', weeklyDigest: false, unitSystem: null, temperatureScale: null });
    expect((await send(reader, 'patch', '/api/me/preferences', { weeklyDigest: true }).expect(200)).body.preferences).toEqual({ units: 'metric', weeklyDigest: true, unitSystem: null, temperatureScale: null });
    expect((await send(reader, 'patch', '/api/me/preferences', { units: null }).expect(200)).body.preferences).toEqual({ units: null, weeklyDigest: true, unitSystem: null, temperatureScale: null });
    const bad = await send(reader, 'patch', '/api/me/preferences', { units: 'furlongs' });
    expect(bad.status).toBe(400);
    expect(bad.body.error.details[0].path).toBe('units');
  });
});

describe('mail and lists for followers when a builder publishes', () => {
  it('mails a follower with mail on and not one who turned it off, and lists the story for followers only', async () => {
    const keen = await sessionWithRole(t, 'follower', 'keen');
    const quiet = await sessionWithRole(t, 'follower', 'quiet');
    const stranger = await sessionWithRole(t, 'follower', 'stranger');
    await send(keen, 'post', `/api/builders/${builderId}/follow`).expect(201);
    await send(quiet, 'post', `/api/builders/${builderId}/follow`).expect(201);
    await send(quiet, 'patch', `/api/me/follows/${builderId}`, { emailOnPublish: false }).expect(200);

    const f = await makeReviewFixture(owner, { clipFile, title: 'Follow test: a new entry' });
    await publishThroughReview(owner, moderator, f);
    const subject = `Ines Calloway published: ${f.story.title}`;
    const [mail] = await t.smtp.waitFor((m) => m.to.includes(keen.email) && m.subject === subject);
    expect(mail!.text).toContain(`/stories/${f.story.id}`);
    expect(mail!.headers['list-unsubscribe']).toMatch(/\/api\/unsubscribe\?token=/);
    // Every message of the move is queued at once; give the worker a polling round past the last one seen.
    await t.smtp.waitFor((m) => m.subject === `Published: ${f.story.title}`);
    await new Promise((r) => setTimeout(r, 2500));
    expect(t.smtp.messages.some((m) => m.to.includes(quiet.email) && m.subject === subject)).toBe(false);
    expect(t.smtp.messages.some((m) => m.to.includes(stranger.email))).toBe(false);

    const following = publicStoryListResponseSchema.parse((await keen.agent.get('/api/public/stories/following').expect(200)).body);
    expect(following.items.map((i) => i.storyId)).toContain(f.story.id);
    expect(following.items.every((i) => i.builder.id === builderId)).toBe(true);
    expect(publicStoryListResponseSchema.parse((await stranger.agent.get('/api/public/stories/following').expect(200)).body).items).toEqual([]);
  }, 120_000);
});
