import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { errorBodySchema } from '@shared/http/error.schema';
import { storyActions, type StoryAction } from '@shared/review/workflow';
import type { StoryState } from '@shared/stories/story.schema';
import { ReviewClaim } from '../../../server/features/review/review.model';
import { Story } from '../../../server/features/stories/story.model';
import { makeTestClip } from '../../support/clips';
import { sessionFor, type Session } from '../../support/matrix-fixtures';
import { lockVersionOf, makeReviewFixture, move, publishThroughReview, type ReviewFixture } from '../../support/review-fixtures';
import { startTestApp, type TestApp } from '../../support/test-app';

/*
 * The workflow over the API: every action from every state, for each kind of caller. The
 * expectations are written out by hand as the product's rule (the same rule as
 * tests/shared/review/workflow.test.ts, plus what only the server knows: who is allowed to see
 * the story at all, whether a revision is public, and who withdrew it).
 */

type Variant =
  | 'draft'
  | 'in-review, never published'
  | 'in-review, r1 public'
  | 'changes-requested, never published'
  | 'changes-requested, r1 public'
  | 'published'
  | 'withdrawn by its builder'
  | 'withdrawn by a moderator';

/** 200 with the state it moves to, or the refusal's status. */
type Cell = StoryState | 403 | 409;

// prettier-ignore
const EXPECTED: Record<Variant, Record<StoryAction, { builder: Cell; moderator: Cell }>> = {
  'draft': {
    submit: { builder: 'in-review', moderator: 403 }, 'request-changes': { builder: 409, moderator: 409 },
    publish: { builder: 409, moderator: 409 }, withdraw: { builder: 409, moderator: 409 }, republish: { builder: 409, moderator: 409 },
  },
  'in-review, never published': {
    submit: { builder: 409, moderator: 409 }, 'request-changes': { builder: 403, moderator: 'changes-requested' },
    publish: { builder: 403, moderator: 'published' }, withdraw: { builder: 409, moderator: 409 }, republish: { builder: 409, moderator: 409 },
  },
  'in-review, r1 public': {
    submit: { builder: 409, moderator: 409 }, 'request-changes': { builder: 403, moderator: 'changes-requested' },
    publish: { builder: 403, moderator: 'published' }, withdraw: { builder: 'withdrawn', moderator: 'withdrawn' }, republish: { builder: 409, moderator: 409 },
  },
  'changes-requested, never published': {
    submit: { builder: 'in-review', moderator: 403 }, 'request-changes': { builder: 409, moderator: 409 },
    publish: { builder: 409, moderator: 409 }, withdraw: { builder: 409, moderator: 409 }, republish: { builder: 409, moderator: 409 },
  },
  'changes-requested, r1 public': {
    submit: { builder: 'in-review', moderator: 403 }, 'request-changes': { builder: 409, moderator: 409 },
    publish: { builder: 409, moderator: 409 }, withdraw: { builder: 'withdrawn', moderator: 'withdrawn' }, republish: { builder: 409, moderator: 409 },
  },
  'published': {
    submit: { builder: 'in-review', moderator: 403 }, 'request-changes': { builder: 409, moderator: 409 },
    publish: { builder: 409, moderator: 409 }, withdraw: { builder: 'withdrawn', moderator: 'withdrawn' }, republish: { builder: 409, moderator: 409 },
  },
  'withdrawn by its builder': {
    submit: { builder: 'in-review', moderator: 403 }, 'request-changes': { builder: 409, moderator: 409 },
    publish: { builder: 409, moderator: 409 }, withdraw: { builder: 409, moderator: 409 }, republish: { builder: 'published', moderator: 'published' },
  },
  'withdrawn by a moderator': {
    submit: { builder: 'in-review', moderator: 403 }, 'request-changes': { builder: 409, moderator: 409 },
    publish: { builder: 409, moderator: 409 }, withdraw: { builder: 409, moderator: 409 }, republish: { builder: 403, moderator: 'published' },
  },
};

let t: TestApp;
let work: string;
let f: ReviewFixture;
let lockVersion: number;
let r1: number;
const s = {} as Record<'owner' | 'moderator' | 'admin' | 'otherBuilder' | 'follower' | 'anonymous', Session>;
const ids = {} as Record<'owner' | 'moderator' | 'admin', number>;

const error = (res: { body: unknown }) => errorBodySchema.parse(res.body).error;

function stateOf(variant: Variant): StoryState {
  return variant.startsWith('withdrawn') ? 'withdrawn' : (variant.split(', ')[0] as StoryState);
}

/** Puts the story straight into a variant (the arrangement; every move under test goes through the API). */
async function putInto(variant: Variant, claimFor: 'moderator' | 'admin' | null) {
  const rest = variant.split(', ')[1];
  const withdrawnBy = variant === 'withdrawn by its builder' ? ids.owner : variant === 'withdrawn by a moderator' ? ids.moderator : null;
  const isPublic = variant === 'published' || withdrawnBy !== null || rest === 'r1 public';
  await Story.update(
    {
      state: stateOf(variant),
      publishedPublicationId: isPublic ? r1 : null,
      withdrawnBy,
      withdrawnReason: withdrawnBy !== null ? 'for the test' : null,
    },
    { where: { id: f.story.id }, silent: true },
  );
  await ReviewClaim.destroy({ where: { storyId: f.story.id } });
  if (claimFor) await ReviewClaim.create({ storyId: f.story.id, moderatorId: ids[claimFor], expiresAt: new Date(Date.now() + 600_000) });
}

const reason = 'the dial is not readable in the still';

beforeAll(async () => {
  work = fs.mkdtempSync(path.join(os.tmpdir(), 'benchproof-transitions-'));
  const clipFile = await makeTestClip({ seconds: 2, format: 'mp4-h264', dir: work });
  t = await startTestApp({}, { jobs: true });
  for (const actor of ['owner', 'moderator', 'admin', 'otherBuilder', 'follower', 'anonymous'] as const) s[actor] = await sessionFor(t, actor);
  for (const actor of ['owner', 'moderator', 'admin'] as const) ids[actor] = (await s[actor].agent.get('/api/me').expect(200)).body.user.id;
  f = await makeReviewFixture(s.owner, { clipFile });
  // A real first publication (and current checks of everything), so "r1 public" is a real revision.
  await publishThroughReview(s.owner, s.moderator, f);
  r1 = (await Story.findByPk(f.story.id))!.publishedPublicationId!;
  lockVersion = await lockVersionOf(s.owner, f.story.id);
}, 180_000);

afterAll(async () => {
  await t?.close();
  if (work) fs.rmSync(work, { recursive: true, force: true });
});

describe('every move from every state, over the API', () => {
  for (const variant of Object.keys(EXPECTED) as Variant[]) {
    for (const who of ['owner', 'moderator', 'admin'] as const) {
      it(`${who === 'owner' ? 'the builder' : who === 'admin' ? 'an admin' : 'a moderator'} · story ${variant}`, async () => {
        for (const action of storyActions) {
          await putInto(variant, who === 'owner' ? null : who);
          const want = EXPECTED[variant][action][who === 'owner' ? 'builder' : 'moderator'];
          const res = await move(s[who], f.story.id, action, { reason, lockVersion });
          const got = res.status === 200 ? (res.body.state as StoryState) : res.status;
          expect(`${action} → ${got}`).toBe(`${action} → ${want}`);
          const stored = (await Story.findByPk(f.story.id))!;
          if (typeof want === 'number') {
            // A refusal changes nothing.
            expect(error(res).message.length).toBeGreaterThan(0);
            expect(stored.state).toBe(stateOf(variant));
          } else {
            expect(stored.state).toBe(want);
          }
        }
      });
    }
    it(`another builder and a follower get 404, and a visitor 401 · story ${variant}`, async () => {
      for (const action of storyActions) {
        await putInto(variant, null);
        for (const who of ['otherBuilder', 'follower'] as const) {
          const res = await move(s[who], f.story.id, action, { reason, lockVersion });
          expect(`${who} ${action} → ${res.status}`).toBe(`${who} ${action} → 404`);
          expect(error(res).code).toBe('not_found');
        }
        const anon = await move(s.anonymous, f.story.id, action, { reason, lockVersion });
        expect(`anonymous ${action} → ${anon.status}`).toBe(`anonymous ${action} → 401`);
      }
    });
  }
});

describe('the refusals say why', () => {
  it('a move the state does not allow is 409 not_allowed_from_state; one for another role is 403', async () => {
    await putInto('draft', 'moderator');
    const res = await move(s.moderator, f.story.id, 'publish', { lockVersion });
    expect(error(res)).toMatchObject({ code: 'not_allowed_from_state', message: 'A story that is a draft cannot be published.' });
    const role = await move(s.moderator, f.story.id, 'submit', { lockVersion });
    expect(role.status).toBe(403);
    expect(error(role)).toMatchObject({ code: 'forbidden', message: 'Only its builder can do that.' });
  });

  it('withdrawing a story in review that was never published is 409 nothing_public', async () => {
    await putInto('in-review, never published', null);
    expect(error(await move(s.owner, f.story.id, 'withdraw', { reason, lockVersion }))).toMatchObject({ code: 'nothing_public' });
  });

  it('a builder cannot lift a moderator’s withdrawal (403 withdrawn_by_moderator), but can send it for review again', async () => {
    await putInto('withdrawn by a moderator', null);
    const res = await move(s.owner, f.story.id, 'republish', { lockVersion });
    expect(res.status).toBe(403);
    expect(error(res).code).toBe('withdrawn_by_moderator');
    expect((await move(s.owner, f.story.id, 'submit', { lockVersion })).body.state).toBe('in-review');
  });

  it('a withdrawal stays in force while a new revision is in review: it cannot be withdrawn again, and nothing is public', async () => {
    await putInto('withdrawn by a moderator', null);
    expect((await move(s.owner, f.story.id, 'submit', { lockVersion })).status).toBe(200);
    const again = await move(s.owner, f.story.id, 'withdraw', { reason, lockVersion });
    expect(error(again).code).toBe('nothing_public');
    const sheet = (await s.moderator.agent.get(`/api/review/stories/${f.story.id}`).expect(200)).body;
    expect(sheet.story.hasPublicRevision).toBe(false);
    // Only a passed review (or a moderator's republish) lifts it.
    expect((await Story.findByPk(f.story.id))!.withdrawnBy).toBe(ids.moderator);
  });

  it('withdrawing or asking for changes without a reason is 400 naming the field', async () => {
    await putInto('published', null);
    const res = await move(s.owner, f.story.id, 'withdraw', { lockVersion });
    expect(res.status).toBe(400);
    expect(error(res).details).toEqual([{ path: 'reason', message: expect.stringContaining('Give a reason') }]);
    await putInto('in-review, r1 public', 'moderator');
    const short = await move(s.moderator, f.story.id, 'request-changes', { reason: 'no', lockVersion });
    expect(short.status).toBe(400);
    expect(error(short).details[0]!.path).toBe('reason');
  });

  it('a move made from an old version of the story is 409 edit_conflict', async () => {
    await putInto('draft', null);
    const res = await move(s.owner, f.story.id, 'submit', { lockVersion: lockVersion + 5 });
    expect(res.status).toBe(409);
    expect(error(res)).toMatchObject({ code: 'edit_conflict', details: [{ path: 'lockVersion', message: `the stored version is ${lockVersion}` }] });
  });

  it('an unknown action or a missing lock version is 400 naming the field', async () => {
    const res = await s.owner.agent.post(`/api/stories/${f.story.id}/transitions`).set('x-csrf-token', s.owner.token).send({ action: 'approve' });
    expect(res.status).toBe(400);
    expect(error(res).details.map((d) => d.path).sort()).toEqual(['action', 'lockVersion']);
  });

  it('a moderator asking for changes must hold the claim (409 claim_not_held)', async () => {
    await putInto('in-review, never published', null);
    const res = await move(s.moderator, f.story.id, 'request-changes', { reason, lockVersion });
    expect(res.status).toBe(409);
    expect(error(res).code).toBe('claim_not_held');
  });
});
