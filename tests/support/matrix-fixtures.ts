import request from 'supertest';
import { clipSchema, type Clip as ClipDto } from '@shared/clips/clip.schema';
import { csrfToken, freshAccount, signIn, type TestApp } from './test-app';

/**
 * Fixtures and sessions for the authorization matrix (tests/server/security/authorization-matrix.test.ts).
 * Everything is made through the API as the owning builder, the way a person would make it.
 */

/** The six kinds of caller the matrix checks, in the column order of its table. */
export const actors = ['anonymous', 'follower', 'owner', 'otherBuilder', 'moderator', 'admin'] as const;
export type Actor = (typeof actors)[number];

/** The seeded demo account (content/people.json) behind each signed-in actor. */
export const actorLogins: Record<Exclude<Actor, 'anonymous'>, string> = {
  follower: 'demo-follower',
  owner: 'demo-builder',
  otherBuilder: 'demo-builder-2',
  moderator: 'demo-moderator',
  admin: 'demo-admin',
};

export type Agent = ReturnType<typeof request.agent>;

/** A browser session: a cookie jar plus the CSRF token of that session. */
export interface Session {
  agent: Agent;
  token: string;
}

/**
 * A new session for an actor. The anonymous one still has a session cookie and a CSRF token
 * (from GET /api/csrf-token), so its state-changing requests are refused for who it is, not for
 * a missing token.
 */
export async function sessionFor(t: TestApp, actor: Actor): Promise<Session> {
  const agent = actor === 'anonymous' ? request.agent(t.app) : await signIn(t, actorLogins[actor]);
  return { agent, token: await csrfToken(agent) };
}

/** Uploads a clip file to a build as the given session; resolves to the new clip's id. */
export async function uploadClip(s: Session, buildId: number, file: string): Promise<number> {
  const res = await s.agent.post(`/api/builds/${buildId}/clips`).set('x-csrf-token', s.token).attach('file', file, 'matrix-clip.mp4');
  if (res.status !== 201) throw new Error(`fixture upload to build ${buildId} answered ${res.status}: ${JSON.stringify(res.body)}`);
  return clipSchema.parse(res.body.clip).id;
}

/** Polls GET /api/clips/:id until the clip is ready; throws on failure or timeout. */
export async function waitUntilReady(s: Session, clipId: number, ms = 90_000): Promise<ClipDto> {
  const end = Date.now() + ms;
  for (;;) {
    const res = await s.agent.get(`/api/clips/${clipId}`);
    if (res.status !== 200) throw new Error(`GET /api/clips/${clipId} answered ${res.status} while waiting for it`);
    const clip = clipSchema.parse(res.body.clip);
    if (clip.status === 'ready') return clip;
    if (clip.status === 'failed') throw new Error(`fixture clip ${clipId} failed: ${clip.failureReason}`);
    if (Date.now() > end) throw new Error(`fixture clip ${clipId} stayed ${clip.status} for ${ms} ms`);
    await new Promise((r) => setTimeout(r, 200));
  }
}

async function createBuild(owner: Session, title: string): Promise<{ buildId: number; partId: number }> {
  const res = await owner.agent
    .post('/api/builds')
    .set('x-csrf-token', owner.token)
    .send({ title, subject: 'invented engine for the authorization matrix', parts: [{ name: 'Matrix oil pump', serial: 'AM-0001' }] });
  if (res.status !== 201) throw new Error(`fixture build answered ${res.status}: ${JSON.stringify(res.body)}`);
  return { buildId: res.body.build.id as number, partId: res.body.build.parts[0].id as number };
}

async function addMoment(owner: Session, clipId: number, atMs: number, label: string): Promise<number> {
  const res = await owner.agent.post(`/api/clips/${clipId}/moments`).set('x-csrf-token', owner.token).send({ atMs, label });
  if (res.status !== 201) throw new Error(`fixture moment on clip ${clipId} answered ${res.status}: ${JSON.stringify(res.body)}`);
  return res.body.moment.id as number;
}

export interface MatrixFixtures {
  /** The owner's build (with one part) that every `:buildId` names. */
  buildId: number;
  partId: number;
  /** A ready clip in that build: every `:clipId` except DELETE's. */
  clipId: number;
  /** A moment on that clip: every `:momentId` except DELETE's. */
  momentId: number;
  /** A fresh follower account: `:id` of the admin user routes. */
  userId: number;
  /** Per actor, a clip of its own to try to delete (in a second build of the owner's). */
  clipToDelete: Record<Actor, number>;
  /** Per actor, a moment of its own to try to delete (on the ready clip). */
  momentToDelete: Record<Actor, number>;
}

/**
 * Builds the fixtures once (call in beforeAll) as the owning builder: a build with a part, a
 * processed clip with a moment, a fresh follower account, and one throwaway clip and moment per
 * actor for the destructive routes, so that one actor's successful DELETE cannot change what
 * another actor's DELETE answers.
 */
export async function buildMatrixFixtures(t: TestApp, owner: Session, clipFile: string): Promise<MatrixFixtures> {
  const { buildId, partId } = await createBuild(owner, 'Authorization matrix build');
  const clipId = await uploadClip(owner, buildId, clipFile);
  await waitUntilReady(owner, clipId);
  const momentId = await addMoment(owner, clipId, 500, 'Matrix moment');

  const spare = await createBuild(owner, 'Authorization matrix throwaway build');
  const clipToDelete = {} as Record<Actor, number>;
  const momentToDelete = {} as Record<Actor, number>;
  for (const [i, actor] of actors.entries()) {
    clipToDelete[actor] = await uploadClip(owner, spare.buildId, clipFile);
    momentToDelete[actor] = await addMoment(owner, clipId, 1000 + i, `Throwaway moment for ${actor}`);
  }
  // Wait for processing, so no worker is still writing a clip's files when a test deletes it.
  await Promise.all(Object.values(clipToDelete).map((id) => waitUntilReady(owner, id)));

  const person = freshAccount(t, 'matrix-user');
  const newcomer = await signIn(t, person.login);
  const me = await newcomer.get('/api/me').expect(200);
  if (me.body.user.role !== 'follower') throw new Error(`a fresh account should be a follower, got ${me.body.user.role}`);

  return { buildId, partId, clipId, momentId, userId: me.body.user.id as number, clipToDelete, momentToDelete };
}
