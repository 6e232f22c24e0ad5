import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { STANDING_NOTE } from '@shared/stories/cautions';
import type { CapturedMessage } from '../../../server/fakes/smtp/fake-smtp';
import { Follow } from '../../../server/features/follows/follow.model';
import { makeTestClip } from '../../support/clips';
import { sessionFor, type Session } from '../../support/matrix-fixtures';
import { checkSubject, claimAndCheckAll, makeReviewFixture, move, publishThroughReview, sessionWithRole } from '../../support/review-fixtures';
import { startTestApp, type TestApp } from '../../support/test-app';

const PUBLIC_URL = 'http://127.0.0.1:3999';
const BUILDER_EMAIL = 'ines@marrow-and-vane.example';
const MODERATOR_EMAIL = 'dagny@orlov-inspection.example';

let t: TestApp;
let work: string;
let clipFile: string;
let owner: Session;
let moderator: Session;
let follower: Session & { userId: number; email: string };
let quiet: Session & { userId: number; email: string };
let builderId: number;

/** Both parts are there, say the same thing, and link back to the site. */
function expectBothParts(m: CapturedMessage, link: string) {
  expect(m.text).toContain(link);
  expect(m.html).not.toBeNull();
  expect(m.html).toContain(`href="${link.replace(/&/g, '&amp;')}"`);
  expect(m.from).toBe('mail@benchproof.invalid');
}

const to = (address: string, subject: string) => (m: CapturedMessage) => m.to.includes(address) && m.subject === subject;

beforeAll(async () => {
  work = fs.mkdtempSync(path.join(os.tmpdir(), 'benchproof-review-mail-'));
  clipFile = await makeTestClip({ seconds: 2, format: 'mp4-h264', dir: work });
  t = await startTestApp({}, { jobs: true, mail: true });
  owner = await sessionFor(t, 'owner');
  moderator = await sessionFor(t, 'moderator');
  builderId = (await owner.agent.get('/api/me').expect(200)).body.user.id;
  // Followers of the builder (the follow routes come later: rows straight into the table).
  follower = await sessionWithRole(t, 'follower', 'mail-follower');
  quiet = await sessionWithRole(t, 'follower', 'quiet-follower');
  await Follow.create({ followerId: follower.userId, builderId });
  await Follow.create({ followerId: quiet.userId, builderId, emailOnPublish: false });
}, 120_000);

afterAll(async () => {
  await t?.close();
  if (work) fs.rmSync(work, { recursive: true, force: true });
});

describe('mail about a story’s review', () => {
  it('sending for review tells the moderators, with a link to the story in the review queue', async () => {
    const f = await makeReviewFixture(owner, { clipFile, title: 'Mail test: sent for review' });
    expect((await move(owner, f.story.id, 'submit')).status).toBe(200);
    const subject = `Waiting for review: ${f.story.title}`;
    const [m] = await t.smtp.waitFor(to(MODERATOR_EMAIL, subject));
    expectBothParts(m!, `${PUBLIC_URL}/review/stories/${f.story.id}`);
    expect(m!.text).toContain('Ines Calloway sent "Mail test: sent for review: end float"');
    expect(m!.headers['list-unsubscribe']).toBeUndefined();
    // The builder is not told about their own submission.
    expect(t.smtp.messages.some((x) => x.subject === subject && x.to.includes(BUILDER_EMAIL))).toBe(false);
  }, 60_000);

  it('asking for changes tells the builder the reason and each flag to answer', async () => {
    const f = await makeReviewFixture(owner, { clipFile, title: 'Mail test: changes' });
    await move(owner, f.story.id, 'submit');
    await claimAndCheckAll(moderator, f);
    // Both typed with their own full stop: the message must not end up with two.
    await checkSubject(moderator, f.story.id, 'reading', f.readings.height.id, 'flagged', 'the micrometer in the still is not the one logged.');
    expect((await move(moderator, f.story.id, 'request-changes', { reason: 'one reading needs another look.' })).status).toBe(200);
    const [m] = await t.smtp.waitFor(to(BUILDER_EMAIL, `Changes requested: ${f.story.title}`));
    expectBothParts(m!, `${PUBLIC_URL}/stories/${f.story.id}/edit`);
    expect(m!.text).toContain('Reason: one reading needs another look.\n');
    expect(m!.text).toContain('Flagged: Rotor height: the micrometer in the still is not the one logged.\n');
    expect(m!.text).not.toMatch(/\.\./);
    expect(m!.html).toContain('Reason: one reading needs another look.</p>');
  }, 60_000);

  it('publishing tells the builder, and each follower who wants mail, with a one-click unsubscribe (RFC 8058)', async () => {
    const f = await makeReviewFixture(owner, { clipFile, title: 'Mail test: published' });
    expect(await publishThroughReview(owner, moderator, f)).toBe(1);

    const [mine] = await t.smtp.waitFor(to(BUILDER_EMAIL, `Published: ${f.story.title}`));
    expectBothParts(mine!, `${PUBLIC_URL}/stories/${f.story.id}`);

    const subject = `Ines Calloway published: ${f.story.title}`;
    const [m] = await t.smtp.waitFor(to(follower.email, subject));
    expectBothParts(m!, `${PUBLIC_URL}/stories/${f.story.id}`);
    expect(m!.text).toContain(STANDING_NOTE);
    const header = m!.headers['list-unsubscribe']!;
    expect(header).toMatch(new RegExp(`^<${PUBLIC_URL.replace(/[.]/g, '\\.')}/api/unsubscribe\\?token=[A-Za-z0-9_.%-]+>$`));
    expect(m!.headers['list-unsubscribe-post']).toBe('List-Unsubscribe=One-Click');
    // The body carries a link to the same token, for people whose client shows no button.
    const token = new URL(header.slice(1, -1)).searchParams.get('token')!;
    expect(m!.text).toContain(`${PUBLIC_URL}/unsubscribe?token=${encodeURIComponent(token)}`);
    expect(m!.html).toContain(`${PUBLIC_URL}/unsubscribe?token=${encodeURIComponent(token)}`);

    // Give the queue a moment more, then: the follower who turned mail off got nothing.
    await new Promise((r) => setTimeout(r, 1500));
    // (Other files share the seeded people and may make them followers too, so only this file's two are judged.)
    const recipients = t.smtp.messages.filter((x) => x.subject === subject).flatMap((x) => x.to);
    expect(recipients.filter((address) => address === follower.email)).toHaveLength(1);
    expect(recipients).not.toContain(quiet.email);

    // What a mail client's one-click button does: POST to the header's address, no session.
    const url = new URL(header.slice(1, -1));
    const get = await request(t.app).get(url.pathname + url.search);
    expect(get.status).toBe(200);
    expect(get.body).toEqual({ builderName: 'Ines Calloway', followerName: expect.any(String), subscribed: true });
    const post = await request(t.app).post(url.pathname + url.search).type('form').send('List-Unsubscribe=One-Click');
    expect(post.status).toBe(200);
    expect(post.body.subscribed).toBe(false);
    expect((await Follow.findOne({ where: { followerId: follower.userId, builderId } }))!.emailOnPublish).toBe(false);
    await Follow.update({ emailOnPublish: true }, { where: { followerId: follower.userId, builderId } });
  }, 90_000);

  it('withdrawing tells the builder who withdrew it and why', async () => {
    const f = await makeReviewFixture(owner, { clipFile, title: 'Mail test: withdrawn' });
    await publishThroughReview(owner, moderator, f);
    expect((await move(moderator, f.story.id, 'withdraw', { reason: 'the clip does not show the blade' })).status).toBe(200);
    const [m] = await t.smtp.waitFor(to(BUILDER_EMAIL, `Withdrawn: ${f.story.title}`));
    expectBothParts(m!, `${PUBLIC_URL}/stories/${f.story.id}/edit`);
    expect(m!.text).toContain('it was withdrawn by a moderator');
    expect(m!.text).toContain('Reason: the clip does not show the blade');
  }, 90_000);

  it('a revised publication tells followers it is a revision', async () => {
    const f = await makeReviewFixture(owner, { clipFile, title: 'Mail test: revised' });
    await publishThroughReview(owner, moderator, f);
    await publishThroughReview(owner, moderator, f);
    const [m] = await t.smtp.waitFor(to(follower.email, `Ines Calloway revised: ${f.story.title}`));
    expect(m!.text).toContain('(revision 2)');
  }, 90_000);
});

describe('a mail server that is down', () => {
  it('never fails a publish: the move succeeds at once, and the mail arrives once the server is back', async () => {
    const f = await makeReviewFixture(owner, { clipFile, title: 'Mail test: server down' });
    await move(owner, f.story.id, 'submit');
    await claimAndCheckAll(moderator, f);
    await t.smtp.stopSmtp();
    try {
      const started = Date.now();
      const res = await move(moderator, f.story.id, 'publish');
      expect(res.status).toBe(200);
      expect(res.body.revision).toBe(1);
      // Far below the SMTP connection timeout (5 s): the request did not wait for the mail server.
      expect(Date.now() - started).toBeLessThan(3000);
      await new Promise((r) => setTimeout(r, 2500));
      expect(t.smtp.messages.some((x) => x.subject === `Published: ${f.story.title}`)).toBe(false);
    } finally {
      await t.smtp.startSmtp();
    }
    const arrived = await t.smtp.waitFor(to(BUILDER_EMAIL, `Published: ${f.story.title}`), 1, 45_000);
    expect(arrived).toHaveLength(1);
    await t.smtp.waitFor(to(follower.email, `Ines Calloway published: ${f.story.title}`), 1, 45_000);
  }, 120_000);
});
