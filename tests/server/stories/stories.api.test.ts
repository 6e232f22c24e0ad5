import crypto from 'node:crypto';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { clearanceResponseSchema } from '@shared/clearances/clearance.schema';
import { errorBodySchema } from '@shared/http/error.schema';
import { readingResponseSchema } from '@shared/readings/reading.schema';
import { specResponseSchema } from '@shared/specs/spec-library.schema';
import {
  storyListResponseSchema,
  storyResponseSchema,
  storyRevisionListResponseSchema,
  storyRevisionResponseSchema,
  storySchema,
  type Story,
} from '@shared/stories/story.schema';
import { Clip, Moment } from '../../../server/features/clips/clip.model';
import { AUTOSAVE_EVERY_MS, autosaveDue } from '../../../server/features/stories/stories.service';
import { Story as StoryRow } from '../../../server/features/stories/story.model';
import { User } from '../../../server/features/users/user.model';
import { csrfToken, signIn, startTestApp, type TestApp } from '../../support/test-app';

type Agent = Awaited<ReturnType<typeof signIn>>;
interface Session {
  agent: Agent;
  token: string;
}

let t: TestApp;
let owner: Session;
let otherBuilder: Session;
let moderator: Session;
let follower: Session;
let admin: Session;
let buildId: number;
let otherBuildId: number;
let momentId: number;
let otherMomentId: number;

async function session(login: string): Promise<Session> {
  const agent = await signIn(t, login);
  return { agent, token: await csrfToken(agent) };
}

async function createBuild(s: Session, title: string): Promise<number> {
  const res = await s.agent.post('/api/builds').set('x-csrf-token', s.token).send({ title, subject: 'invented engine for story tests' }).expect(201);
  return res.body.build.id as number;
}

/** A ready clip with one moment, made directly: these tests are about stories, not media processing. */
async function momentOn(build: number, login: string, atMs: number): Promise<number> {
  const user = await User.findOne({ where: { login } });
  const clip = await Clip.create({
    buildId: build,
    title: 'Story test clip',
    position: 0,
    originalName: 'story-test.mp4',
    sizeBytes: 1000,
    container: 'mp4',
    storagePrefix: crypto.randomUUID(),
    status: 'ready',
    probe: { container: 'mp4', videoCodec: 'h264', audioCodec: null, durationS: 10, width: 320, height: 240, frameRate: 30, rotation: 0 },
  });
  const moment = await Moment.create({ clipId: clip.id, atMs, label: 'cover', createdBy: user!.id });
  return moment.id;
}

async function createStory(body: Record<string, unknown> = {}, s: Session = owner, build = buildId): Promise<Story> {
  const res = await s.agent
    .post(`/api/builds/${build}/stories`)
    .set('x-csrf-token', s.token)
    .send({ title: 'Oil pump, as found', ...body })
    .expect(201);
  return storyResponseSchema.parse(res.body).story;
}

function patch(s: Session, storyId: number, body: Record<string, unknown>) {
  return s.agent.patch(`/api/stories/${storyId}`).set('x-csrf-token', s.token).send(body);
}

/** The fields an error body names, each once. */
function detailPaths(body: unknown): (string | undefined)[] {
  return [...new Set(errorBodySchema.parse(body).error.details.map((d) => d.path))];
}

beforeAll(async () => {
  t = await startTestApp();
  owner = await session('demo-builder');
  otherBuilder = await session('demo-builder-2');
  moderator = await session('demo-moderator');
  follower = await session('demo-follower');
  admin = await session('demo-admin');
  buildId = await createBuild(owner, 'Story tests: pump');
  otherBuildId = await createBuild(otherBuilder, 'Story tests: someone else’s build');
  momentId = await momentOn(buildId, 'demo-builder', 2500);
  otherMomentId = await momentOn(otherBuildId, 'demo-builder-2', 1000);
});
afterAll(() => t.close());

describe('creating and reading stories', () => {
  it('a builder writes a draft on their build; it comes back with its word count and cover still', async () => {
    const story = await createStory({
      summary: 'Measured before any work.',
      workDate: '2026-11-28',
      tags: { machine: ['Vellum 1100'], component: ['oil pump'], operation: ['inspection'] },
      coverMomentId: momentId,
      body: 'The pump came apart cleanly. [End float](clearance:end-float) was large.',
    });
    expect(story).toMatchObject({
      buildId,
      buildTitle: 'Story tests: pump',
      title: 'Oil pump, as found',
      workDate: '2026-11-28',
      state: 'draft',
      lockVersion: 1,
      coverMomentId: momentId,
      // The still URL the moment itself carries (momentDto): clip frame at 2.500 s.
      coverUrl: expect.stringMatching(/^\/api\/clips\/\d+\/frame\?t=2\.500$/),
      // The, pump, came, apart, cleanly, End, float, was, large: the link target is not a word.
      wordCount: 9,
    });
    const read = await owner.agent.get(`/api/stories/${story.id}`).expect(200);
    expect(storyResponseSchema.parse(read.body).story).toEqual(story);
  });

  it('lists a build’s stories newest first, a page at a time', async () => {
    const build = await createBuild(owner, 'Story tests: list');
    const first = await createStory({ title: 'First' }, owner, build);
    const second = await createStory({ title: 'Second' }, owner, build);
    const third = await createStory({ title: 'Third' }, owner, build);
    const page = storyListResponseSchema.parse((await owner.agent.get(`/api/builds/${build}/stories?limit=2`).expect(200)).body);
    expect(page.items.map((s) => s.id)).toEqual([third.id, second.id]);
    expect(page.nextBefore).toBe(second.id);
    expect(page.items[0]).not.toHaveProperty('body');
    const rest = storyListResponseSchema.parse((await owner.agent.get(`/api/builds/${build}/stories?limit=2&before=${page.nextBefore}`).expect(200)).body);
    expect(rest.items.map((s) => s.id)).toEqual([first.id]);
    expect(rest.nextBefore).toBeNull();
  });

  it('refuses bad fields and names each one', async () => {
    const post = (body: Record<string, unknown>) => owner.agent.post(`/api/builds/${buildId}/stories`).set('x-csrf-token', owner.token).send(body);
    expect(detailPaths((await post({ title: '   ' }).expect(400)).body)).toEqual(['title']);
    expect(detailPaths((await post({ title: 'Tags', tags: { machine: ['Vellum, 1100'] } }).expect(400)).body)).toEqual(['tags.machine.0']);
    expect(detailPaths((await post({ title: 'Date', workDate: '2026-02-30' }).expect(400)).body)).toEqual(['workDate']);
    expect(detailPaths((await post({ title: 'Date', workDate: 'last Tuesday' }).expect(400)).body)).toEqual(['workDate']);
    expect(detailPaths((await post({ title: 'Cover', coverMomentId: otherMomentId }).expect(400)).body)).toEqual(['coverMomentId']);
    const story = await createStory();
    expect(detailPaths((await patch(owner, story.id, { lockVersion: 1, coverMomentId: otherMomentId }).expect(400)).body)).toEqual(['coverMomentId']);
    expect(detailPaths((await patch(owner, story.id, { title: 'No version' }).expect(400)).body)).toEqual(['lockVersion']);
  });
});

describe('who may read and change a story', () => {
  it('another builder cannot see or change your draft (404), as for an unknown id', async () => {
    const story = await createStory();
    await otherBuilder.agent.get(`/api/stories/${story.id}`).expect(404);
    await otherBuilder.agent.get(`/api/builds/${buildId}/stories`).expect(404);
    await patch(otherBuilder, story.id, { lockVersion: 1, title: 'Mine now' }).expect(404);
    await otherBuilder.agent.delete(`/api/stories/${story.id}`).set('x-csrf-token', otherBuilder.token).expect(404);
    await otherBuilder.agent.get(`/api/stories/${story.id}/revisions`).expect(404);
    await otherBuilder.agent.get(`/api/stories/${story.id}/claims`).expect(404);
    await otherBuilder.agent.post(`/api/builds/${buildId}/stories`).set('x-csrf-token', otherBuilder.token).send({ title: 'Intruder' }).expect(404);
    await owner.agent.get('/api/stories/999999999').expect(404);
  });

  it('moderators and admins read a draft but cannot change it (403)', async () => {
    const story = await createStory();
    for (const reviewer of [moderator, admin]) {
      await reviewer.agent.get(`/api/stories/${story.id}`).expect(200);
      await reviewer.agent.get(`/api/stories/${story.id}/revisions`).expect(200);
      await reviewer.agent.get(`/api/builds/${buildId}/stories`).expect(200);
      await reviewer.agent.post(`/api/stories/${story.id}/revisions`).set('x-csrf-token', reviewer.token).expect(403);
      await reviewer.agent.delete(`/api/stories/${story.id}`).set('x-csrf-token', reviewer.token).expect(403);
    }
    await patch(moderator, story.id, { lockVersion: 1, title: 'Edited by a moderator' }).expect(403);
    await patch(admin, story.id, { lockVersion: 1, title: 'Edited by an admin' }).expect(403);
    await moderator.agent.post(`/api/builds/${buildId}/stories`).set('x-csrf-token', moderator.token).send({ title: 'x' }).expect(403);
    const after = storySchema.parse((await owner.agent.get(`/api/stories/${story.id}`).expect(200)).body.story);
    expect(after.title).toBe('Oil pump, as found');
  });

  it('followers cannot create stories (403) nor read drafts (404); visitors are asked to sign in (401)', async () => {
    const story = await createStory();
    await follower.agent.post(`/api/builds/${buildId}/stories`).set('x-csrf-token', follower.token).send({ title: 'Fan fiction' }).expect(403);
    await follower.agent.get(`/api/stories/${story.id}`).expect(404);
    const { default: request } = await import('supertest');
    await request(t.app).get(`/api/stories/${story.id}`).expect(401);
  });
});

describe('saving from two tabs', () => {
  it('the second save from the same version is refused with edit_conflict and its text is not stored', async () => {
    const story = await createStory({ body: 'Start.' });
    const first = await patch(owner, story.id, { lockVersion: 1, body: 'Typed in the first tab.' }).expect(200);
    expect(storySchema.parse(first.body.story)).toMatchObject({ lockVersion: 2, body: 'Typed in the first tab.' });
    const second = await patch(owner, story.id, { lockVersion: 1, body: 'Typed in the second tab.' }).expect(409);
    const error = errorBodySchema.parse(second.body).error;
    expect(error.code).toBe('edit_conflict');
    expect(error.details).toEqual([{ path: 'lockVersion', message: 'the stored version is 2' }]);
    const stored = storySchema.parse((await owner.agent.get(`/api/stories/${story.id}`).expect(200)).body.story);
    expect(stored).toMatchObject({ body: 'Typed in the first tab.', lockVersion: 2 });
  });

  it('only the fields sent change', async () => {
    const story = await createStory({ summary: 'Kept', body: 'Kept too.' });
    const res = await patch(owner, story.id, { lockVersion: 1, title: 'Renamed' }).expect(200);
    expect(storySchema.parse(res.body.story)).toMatchObject({ title: 'Renamed', summary: 'Kept', body: 'Kept too.' });
  });
});

describe('revisions', () => {
  it('an autosave revision is kept at most every five minutes while someone types', async () => {
    const story = await createStory({ body: 'v0' });
    const list = async () => storyRevisionListResponseSchema.parse((await owner.agent.get(`/api/stories/${story.id}/revisions`).expect(200)).body).items;

    await patch(owner, story.id, { lockVersion: 1, body: 'v1' }).expect(200);
    expect((await list()).map((r) => [r.number, r.reason])).toEqual([[1, 'autosave']]);

    await patch(owner, story.id, { lockVersion: 2, body: 'v2' }).expect(200);
    expect(await list()).toHaveLength(1);

    // Age the newest revision past the interval instead of waiting for it.
    await t.sequelize.query(`UPDATE story_revisions SET created_at = now() - interval '6 minutes' WHERE story_id = :id`, { replacements: { id: story.id } });
    await patch(owner, story.id, { lockVersion: 3, body: 'v3' }).expect(200);
    const items = await list();
    expect(items.map((r) => [r.number, r.reason])).toEqual([
      [2, 'autosave'],
      [1, 'autosave'],
    ]);
    const newest = storyRevisionResponseSchema.parse((await owner.agent.get(`/api/stories/${story.id}/revisions/2`).expect(200)).body).revision;
    expect(newest).toMatchObject({ body: 'v3', savedByName: expect.any(String) });
    const oldest = storyRevisionResponseSchema.parse((await owner.agent.get(`/api/stories/${story.id}/revisions/1`).expect(200)).body).revision;
    expect(oldest.body).toBe('v1');
  });

  it('the pacing rule: due with no revision, or when the newest is at least the interval old', () => {
    const now = new Date('2026-12-01T10:00:00Z');
    expect(AUTOSAVE_EVERY_MS).toBe(5 * 60 * 1000);
    expect(autosaveDue(null, now)).toBe(true);
    expect(autosaveDue(new Date('2026-12-01T09:55:00Z'), now)).toBe(true);
    expect(autosaveDue(new Date('2026-12-01T09:55:01Z'), now)).toBe(false);
  });

  it('the builder keeps the current state as a numbered revision, read back whole', async () => {
    const story = await createStory({ body: 'Draft one.' });
    await patch(owner, story.id, { lockVersion: 1, body: 'Draft two.' }).expect(200);
    const kept = await owner.agent.post(`/api/stories/${story.id}/revisions`).set('x-csrf-token', owner.token).expect(201);
    const revision = storyRevisionResponseSchema.parse(kept.body).revision;
    expect(revision).toMatchObject({ number: 2, reason: 'kept', body: 'Draft two.', title: 'Oil pump, as found' });
    const page = storyRevisionListResponseSchema.parse((await moderator.agent.get(`/api/stories/${story.id}/revisions?limit=1`).expect(200)).body);
    expect(page.items.map((r) => r.number)).toEqual([2]);
    expect(page.items[0]).not.toHaveProperty('body');
    expect(page.nextBefore).toBe(2);
    const older = storyRevisionListResponseSchema.parse((await moderator.agent.get(`/api/stories/${story.id}/revisions?before=2`).expect(200)).body);
    expect(older.items.map((r) => r.number)).toEqual([1]);
    expect(older.nextBefore).toBeNull();
    await owner.agent.get(`/api/stories/${story.id}/revisions/99`).expect(404);
  });

  it('revisions kept at the same moment get distinct numbers', async () => {
    const story = await createStory();
    const results = await Promise.all(
      [1, 2, 3, 4].map(() => owner.agent.post(`/api/stories/${story.id}/revisions`).set('x-csrf-token', owner.token)),
    );
    expect(results.map((r) => r.status)).toEqual([201, 201, 201, 201]);
    expect(results.map((r) => r.body.revision.number as number).sort()).toEqual([1, 2, 3, 4]);
  });
});

describe('deleting', () => {
  it('the builder deletes a draft; anything else is refused with story_not_draft', async () => {
    const draft = await createStory();
    await owner.agent.delete(`/api/stories/${draft.id}`).set('x-csrf-token', owner.token).expect(204);
    await owner.agent.get(`/api/stories/${draft.id}`).expect(404);

    const sent = await createStory();
    await StoryRow.update({ state: 'in-review' }, { where: { id: sent.id } });
    const res = await owner.agent.delete(`/api/stories/${sent.id}`).set('x-csrf-token', owner.token).expect(409);
    expect(errorBodySchema.parse(res.body).error.code).toBe('story_not_draft');
    await owner.agent.get(`/api/stories/${sent.id}`).expect(200);
  });
});

describe('claims of a stored body', () => {
  it('checks each claim against the build’s readings and clearances as they are now', async () => {
    const build = await createBuild(owner, 'Story tests: claims');
    const moment = await momentOn(build, 'demo-builder', 4000);
    const post = async (path: string, body: Record<string, unknown>) => {
      const res = await owner.agent.post(path).set('x-csrf-token', owner.token).send(body);
      if (res.status !== 201) throw new Error(`${path} answered ${res.status}: ${JSON.stringify(res.body)}`);
      return res.body;
    };
    const instrument = await post('/api/instruments', {
      name: 'Story test depth micrometer',
      kind: 'depth-micrometer',
      unit: 'in',
      resolution: '0.0001',
      lastCalibratedOn: new Date().toISOString().slice(0, 10),
      calibrationIntervalDays: 365,
    });
    const spec = specResponseSchema.parse(
      await post('/api/specs', {
        name: 'Story test rotor end float (invented)',
        unit: 'in',
        min: '0.0015',
        max: '0.0040',
        source: { kind: 'manual', text: 'Invented workshop manual for the test, section 1' },
      }),
    ).spec;
    const reading = async (key: string, value: string) =>
      readingResponseSchema.parse(await post(`/api/builds/${build}/readings`, { momentId: moment, instrumentId: instrument.instrument.id, key, name: key, kind: 'direct', value })).reading;
    const depth = await reading('pump-depth', '0.5642');
    const height = await reading('rotor-height', '0.5595');
    const clearance = clearanceResponseSchema.parse(
      await post(`/api/builds/${build}/clearances`, {
        key: 'end-float-after',
        name: 'End float after lapping',
        terms: [
          { readingId: depth.id, sign: 1 },
          { readingId: height.id, sign: -1 },
        ],
        specVersionId: spec.latest.id,
      }),
    ).clearance;
    // 0.5642 in − 0.5595 in = 0.0047 in = 119.38 µm (1 in = 25.4 mm exactly, NIST SP 811 appendix B).
    expect(clearance.result?.valueUm).toBeCloseTo(119.38, 6);
    // Guarded rule (ISO 14253-1, ILAC-G8:09/2019): out of spec when value ≥ max + U; U from two 0.0001 in
    // resolutions is well under the 0.0007 in between 0.0047 in and the 0.0040 in maximum.
    expect(clearance.result?.verdict).toBe('does-not-conform');

    const body = [
      '[End float 4.7 thou](clearance:end-float-after) and [three thou](clearance:end-float-after).',
      'It is [within spec](clearance:end-float-after), or rather [out of spec](clearance:end-float-after).',
      '[The depth](reading:pump-depth), [gone](reading:never-logged), [typo](clearence:end-float-after).',
      '`[in code](reading:pump-depth)`',
    ].join('\n');
    const story = await createStory({ body }, owner, build);
    const res = await moderator.agent.get(`/api/stories/${story.id}/claims`).expect(200);
    const claims = res.body.claims as { kind: string; key: string; text: string; line: number; status: { state: string }; target: { valueUm: number; momentId: number | null; display: string } | null }[];
    expect(claims.map((c) => [c.key, c.line, c.status.state])).toEqual([
      ['end-float-after', 1, 'ok'],
      ['end-float-after', 1, 'number-disagrees'],
      ['end-float-after', 2, 'verdict-disagrees'],
      ['end-float-after', 2, 'ok'],
      ['pump-depth', 3, 'ok'],
      ['never-logged', 3, 'unknown-target'],
    ]);
    expect(claims[0]?.target?.display).toBe(clearance.result?.display);
    expect(claims[4]?.target).toMatchObject({ momentId: moment, valueUm: depth.result.valueUm });
    expect(claims[5]?.target).toBeNull();
    expect((res.body.broken as { target: string; line: number }[]).map((b) => [b.target, b.line])).toEqual([['clearence:end-float-after', 3]]);
  });
});
