import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { errorBodySchema } from '@shared/http/error.schema';
import { questionListResponseSchema, questionResponseSchema } from '@shared/public/questions.schema';
import { AuditEntry } from '../../../server/features/audit/audit.model';
import { makeTestClip } from '../../support/clips';
import { sessionFor, type Session } from '../../support/matrix-fixtures';
import { makeReviewFixture, move, publishThroughReview, sessionWithRole, type ReviewFixture } from '../../support/review-fixtures';
import { startTestApp, type TestApp } from '../../support/test-app';

let t: TestApp;
let work: string;
let owner: Session;
let otherBuilder: Session;
let moderator: Session;
let admin: Session;
let anonymous: Session;
let f: ReviewFixture;
let draft: ReviewFixture;

const post = (s: Session, url: string, body: object = {}) => s.agent.post(url).set('x-csrf-token', s.token).send(body);
const ask = (s: Session, body: string, storyId = f.story.id) => post(s, `/api/public/stories/${storyId}/questions`, { body });
const list = async (s: Session) => questionListResponseSchema.parse((await s.agent.get(`/api/public/stories/${f.story.id}/questions`).expect(200)).body);

beforeAll(async () => {
  work = fs.mkdtempSync(path.join(os.tmpdir(), 'benchproof-questions-'));
  const clipFile = await makeTestClip({ seconds: 2, format: 'mp4-h264', dir: work });
  t = await startTestApp({}, { jobs: true });
  [owner, otherBuilder, moderator, admin, anonymous] = await Promise.all([
    sessionFor(t, 'owner'),
    sessionFor(t, 'otherBuilder'),
    sessionFor(t, 'moderator'),
    sessionFor(t, 'admin'),
    sessionFor(t, 'anonymous'),
  ]);
  f = await makeReviewFixture(owner, { clipFile, title: 'Question test: published' });
  await publishThroughReview(owner, moderator, f);
  draft = await makeReviewFixture(owner, { clipFile, title: 'Question test: draft' });
}, 180_000);

afterAll(async () => {
  await t?.close();
  if (work) fs.rmSync(work, { recursive: true, force: true });
});

describe('questions on a published story', () => {
  it('keeps plain text literally: a script tag comes back as the same text', async () => {
    const reader = await sessionWithRole(t, 'follower', 'asker');
    const body = '<script>alert("x")</script> Did you measure the bore at 20 °C? & what about <b>taper</b>?';
    const res = await ask(reader, `  ${body}  `);
    expect(res.status).toBe(201);
    const q = questionResponseSchema.parse(res.body).question;
    expect(q.body).toBe(body);
    expect(q.author.id).toBe(reader.userId);
    const shown = (await list(anonymous)).items.find((x) => x.id === q.id)!;
    expect(shown.body).toBe(body);
    expect(shown).toMatchObject({ hidden: false, hiddenReason: null, answer: null });
  });

  it('needs a signed-in reader and a question of 3 to 2000 characters, and a story that is public', async () => {
    expect((await ask(anonymous, 'Why this blade?')).status).toBe(401);
    const reader = await sessionWithRole(t, 'follower', 'short');
    const short = await ask(reader, 'ok');
    expect(short.status).toBe(400);
    expect(errorBodySchema.parse(short.body).error.details[0]!.path).toBe('body');
    expect((await ask(reader, 'x'.repeat(2001))).status).toBe(400);
    expect((await ask(reader, 'x'.repeat(2000))).status).toBe(201);
    expect((await ask(reader, 'Is this measured yet?', draft.story.id)).status).toBe(404);
    expect((await anonymous.agent.get(`/api/public/stories/${draft.story.id}/questions`)).status).toBe(404);
  });

  it('the builder answers; nobody else can', async () => {
    const reader = await sessionWithRole(t, 'follower', 'answered');
    const q = questionResponseSchema.parse((await ask(reader, 'Which feeler set did you use?').expect(201)).body).question;
    for (const s of [reader, otherBuilder, moderator, admin]) {
      expect((await post(s, `/api/questions/${q.id}/answer`, { body: 'Not mine to answer.' })).status).toBe(403);
    }
    expect((await post(anonymous, `/api/questions/${q.id}/answer`, { body: 'Anonymous answer' })).status).toBe(401);
    const answered = await post(owner, `/api/questions/${q.id}/answer`, { body: 'The invented 0.0015–0.025 in set, <i>as logged</i>.' });
    expect(answered.status).toBe(200);
    expect(answered.body.question.answer).toMatchObject({ body: 'The invented 0.0015–0.025 in set, <i>as logged</i>.', by: { displayName: 'Ines Calloway' } });
    expect((await list(anonymous)).items.find((x) => x.id === q.id)!.answer!.body).toBe('The invented 0.0015–0.025 in set, <i>as logged</i>.');
    expect((await post(owner, '/api/questions/999999999/answer', { body: 'nothing' })).status).toBe(404);
  });

  it('a moderator hides a question (with an audit line): readers no longer see it; the builder and moderators see it marked', async () => {
    const reader = await sessionWithRole(t, 'follower', 'rude');
    const q = questionResponseSchema.parse((await ask(reader, 'Buy cheap parts at example dot invalid').expect(201)).body).question;
    for (const s of [reader, owner, otherBuilder]) expect((await post(s, `/api/questions/${q.id}/hide`, { reason: 'advertising' })).status).toBe(403);
    expect((await post(moderator, `/api/questions/${q.id}/hide`, {})).status).toBe(400);
    const hidden = await post(moderator, `/api/questions/${q.id}/hide`, { reason: 'advertising' });
    expect(hidden.status).toBe(200);
    expect(hidden.body.question).toMatchObject({ hidden: true, hiddenReason: 'advertising' });
    expect(await AuditEntry.count({ where: { action: 'question.hide', subjectType: 'question', subjectId: q.id, storyId: f.story.id } })).toBe(1);

    for (const s of [anonymous, reader, otherBuilder]) expect((await list(s)).items.some((x) => x.id === q.id)).toBe(false);
    for (const s of [owner, moderator, admin]) expect((await list(s)).items.find((x) => x.id === q.id)).toMatchObject({ hidden: true, hiddenReason: 'advertising' });
    expect((await list(moderator)).canModerate).toBe(true);
    expect((await list(owner))).toMatchObject({ canAnswer: true, canModerate: false });

    // An admin shows it again; that is on record too.
    expect((await post(admin, `/api/questions/${q.id}/unhide`)).body.question).toMatchObject({ hidden: false, hiddenReason: null });
    expect(await AuditEntry.count({ where: { action: 'question.unhide', subjectId: q.id } })).toBe(1);
    expect((await list(anonymous)).items.some((x) => x.id === q.id)).toBe(true);
  });

  it('lists oldest first and pages by id', async () => {
    const all = (await list(anonymous)).items.map((x) => x.id);
    expect([...all].sort((a, b) => a - b)).toEqual(all);
    const first = questionListResponseSchema.parse((await anonymous.agent.get(`/api/public/stories/${f.story.id}/questions`).query({ limit: 1 }).expect(200)).body);
    expect(first.items.map((x) => x.id)).toEqual(all.slice(0, 1));
    const next = questionListResponseSchema.parse((await anonymous.agent.get(`/api/public/stories/${f.story.id}/questions`).query({ limit: 50, after: first.nextAfter }).expect(200)).body);
    expect(next.items.map((x) => x.id)).toEqual(all.slice(1));
  });

  it('a withdrawn story’s questions are no longer shown', async () => {
    const g = await makeReviewFixture(owner, { clipFile: await makeTestClip({ seconds: 2, format: 'mp4-h264', dir: work, name: 'withdrawn' }), title: 'Question test: withdrawn' });
    await publishThroughReview(owner, moderator, g);
    const reader = await sessionWithRole(t, 'follower', 'late');
    const q = (await ask(reader, 'What torque on the cover screws?', g.story.id).expect(201)).body.question;
    expect((await move(owner, g.story.id, 'withdraw', { reason: 'redoing the readings' })).status).toBe(200);
    expect((await anonymous.agent.get(`/api/public/stories/${g.story.id}/questions`)).status).toBe(404);
    expect((await post(owner, `/api/questions/${q.id}/answer`, { body: 'Later.' })).status).toBe(404);
  }, 60_000);
});

describe('the question rate limit', () => {
  it('refuses a sixth question from one account within ten minutes with 429 and the one error body', async () => {
    const reader = await sessionWithRole(t, 'follower', 'eager');
    for (let i = 1; i <= 5; i += 1) expect((await ask(reader, `Question number ${i}?`)).status).toBe(201);
    const refused = await ask(reader, 'Question number 6?');
    expect(refused.status).toBe(429);
    const body = errorBodySchema.parse(refused.body);
    expect(body.error.code).toBe('rate_limited');
    expect(body.error.message).toMatch(/5 questions in the last ten minutes/);
    // Another account is not held back by this one's limit.
    const other = await sessionWithRole(t, 'follower', 'patient');
    expect((await ask(other, 'One question from me?')).status).toBe(201);
  });

  it('refuses questions from one address after 30 in ten minutes, whichever accounts ask', async () => {
    let refused: { status: number; body: unknown } | null = null;
    let asked = 0;
    for (let n = 0; n < 10 && !refused; n += 1) {
      const reader = await sessionWithRole(t, 'follower', `crowd-${n}`);
      for (let i = 0; i < 5; i += 1) {
        const res = await ask(reader, `Crowd question ${n}.${i}?`);
        if (res.status === 429) {
          refused = res;
          break;
        }
        expect(res.status).toBe(201);
        asked += 1;
      }
    }
    expect(refused).not.toBeNull();
    expect(errorBodySchema.parse(refused!.body).error).toMatchObject({ code: 'rate_limited', message: expect.stringMatching(/this address/) });
    // Every 201 in this file came from the same address, so the refusal came within 30 of them.
    expect(asked).toBeLessThan(30);
  }, 60_000);
});
