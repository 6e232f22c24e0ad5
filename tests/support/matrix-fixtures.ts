import path from 'node:path';
import request from 'supertest';
import { clipSchema, type Clip as ClipDto } from '@shared/clips/clip.schema';
import { Follow } from '../../server/features/follows/follow.model';
import { signUnsubscribe } from '../../server/features/follows/unsubscribe-token';
import { ffmpegDirect } from './clips';
import { makeReviewFixture, move, publishThroughReview } from './review-fixtures';
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
  const agent = actor === 'anonymous' ? request.agent(t.server) : await signIn(t, actorLogins[actor]);
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

type Verb = 'post' | 'patch' | 'delete';

/** A state-changing request as `s`, with its CSRF token. */
function send(s: Session, verb: Verb, url: string, body?: object) {
  const req = s.agent[verb](url).set('x-csrf-token', s.token);
  return body === undefined ? req : req.send(body);
}

/** The body of a request the fixture needs to succeed; anything else stops the set-up with what the server said. */
async function expectStatus<T = Record<string, unknown>>(what: string, status: number, res: Promise<{ status: number; body: unknown }>): Promise<T> {
  const r = await res;
  if (r.status !== status) throw new Error(`fixture ${what} answered ${r.status}: ${JSON.stringify(r.body)}`);
  return r.body as T;
}

/** One entry per actor, made by `make` (in parallel: each is independent of the others). */
async function perActor(make: (actor: Actor, i: number) => Promise<number>): Promise<Record<Actor, number>> {
  const ids = await Promise.all(actors.map((actor, i) => make(actor, i)));
  return Object.fromEntries(actors.map((actor, i) => [actor, ids[i]!])) as Record<Actor, number>;
}

/** A key that is valid in the API ("matrix-spare-otherbuilder") for an actor's throwaway. */
const keyFor = (prefix: string, actor: Actor) => `${prefix}-${actor.toLowerCase()}`;

async function createBuild(owner: Session, title: string): Promise<{ buildId: number; partId: number }> {
  const body = await expectStatus<{ build: { id: number; parts: { id: number }[] } }>(
    'build',
    201,
    send(owner, 'post', '/api/builds', { title, subject: 'invented engine for the authorization matrix', parts: [{ name: 'Matrix oil pump', serial: 'AM-0001' }] }),
  );
  return { buildId: body.build.id, partId: body.build.parts[0]!.id };
}

async function addMoment(owner: Session, clipId: number, atMs: number, label: string): Promise<number> {
  const body = await expectStatus<{ moment: { id: number } }>(`moment on clip ${clipId}`, 201, send(owner, 'post', `/api/clips/${clipId}/moments`, { atMs, label }));
  return body.moment.id;
}

async function addInstrument(owner: Session, name: string, kind: 'depth-micrometer' | 'outside-micrometer'): Promise<number> {
  const body = await expectStatus<{ instrument: { id: number } }>(
    `instrument ${name}`,
    201,
    send(owner, 'post', '/api/instruments', { name, kind, unit: 'in', resolution: '0.0001', serial: 'AM-MIC', lastCalibratedOn: '2026-01-05', calibrationIntervalDays: 3650 }),
  );
  return body.instrument.id;
}

async function addReading(owner: Session, buildId: number, fields: Record<string, unknown>): Promise<number> {
  const body = await expectStatus<{ reading: { id: number } }>(
    `reading ${String(fields.key)}`,
    201,
    send(owner, 'post', `/api/builds/${buildId}/readings`, { kind: 'direct', takenOn: '2026-11-20', ...fields }),
  );
  return body.reading.id;
}

async function addClearance(owner: Session, buildId: number, fields: Record<string, unknown>): Promise<number> {
  const body = await expectStatus<{ clearance: { id: number } }>(`clearance ${String(fields.key)}`, 201, send(owner, 'post', `/api/builds/${buildId}/clearances`, fields));
  return body.clearance.id;
}

async function addStory(owner: Session, buildId: number, title: string, body = matrixStoryBody): Promise<number> {
  const res = await expectStatus<{ story: { id: number } }>(`story ${title}`, 201, send(owner, 'post', `/api/builds/${buildId}/stories`, { title, body }));
  return res.story.id;
}

/** A story's lock version now, as its builder sees it. */
export async function storyLockVersion(owner: Session, storyId: number): Promise<number> {
  const res = await owner.agent.get(`/api/stories/${storyId}`);
  if (res.status !== 200) throw new Error(`GET /api/stories/${storyId} answered ${res.status}`);
  return res.body.story.lockVersion as number;
}

/** Sends a draft for review as its builder. */
async function submit(owner: Session, storyId: number): Promise<void> {
  const lockVersion = await storyLockVersion(owner, storyId);
  await expectStatus(`submit of story ${storyId}`, 200, send(owner, 'post', `/api/stories/${storyId}/transitions`, { action: 'submit', lockVersion }));
}

/** A story in review, taken for review by `claimant` when given. */
async function storyInReview(owner: Session, buildId: number, title: string, claimant?: Session): Promise<number> {
  const id = await addStory(owner, buildId, title);
  await submit(owner, id);
  if (claimant) await expectStatus(`claim of story ${id}`, 200, send(claimant, 'post', `/api/review/stories/${id}/claim`));
  return id;
}

/** Keys of the fixture build's cited reading and clearance. */
export const matrixKeys = { depth: 'matrix-bore-depth', height: 'matrix-rotor-height', clearance: 'matrix-end-float' } as const;

/**
 * The body of every fixture story: two claims (a reading, and a clearance made of both readings),
 * so a moderator has readings to check. Figures invented: 0.5642 in − 0.5595 in = 0.0047 in.
 */
export const matrixStoryBody = [
  'The invented pump body sat on the surface plate, clean and dry, before anything was measured.',
  '',
  `[The bore depth read 0.5642 in](reading:${matrixKeys.depth}) with the depth micrometer.`,
  '',
  `[End float is 0.0047 in](clearance:${matrixKeys.clearance}), the rotor height taken off the bore depth.`,
  '',
].join('\n');

/** A small real PNG (ffmpeg's test pattern, encoded by the ffmpeg the product runs), for image uploads. */
export async function makeTestPng(dir: string, name = 'matrix.png'): Promise<string> {
  const file = path.join(dir, name);
  await ffmpegDirect(['-v', 'error', '-y', '-f', 'lavfi', '-i', 'testsrc2=size=64x48', '-frames:v', '1', file]);
  return file;
}

export interface MatrixFixtures {
  /** The owner's build (with one part) that every `:buildId` names. */
  buildId: number;
  partId: number;
  /** A ready clip in that build: every `:clipId` except DELETE's. */
  clipId: number;
  /** A moment on that clip: every `:momentId` except DELETE's; the fixture readings are taken at it. */
  momentId: number;
  /** A fresh follower account: `:id` of the admin user routes, and the follower in the unsubscribe token. */
  userId: number;
  /** The account id behind each signed-in actor. */
  actorIds: Record<Exclude<Actor, 'anonymous'>, number>;
  /** Per actor, a clip of its own to try to delete (in a second build of the owner's). */
  clipToDelete: Record<Actor, number>;
  /** Per actor, a moment of its own to try to delete (on the ready clip). */
  momentToDelete: Record<Actor, number>;
  /** The owner's inch depth micrometer, with readings logged: every `:instrumentId` except DELETE's. */
  instrumentId: number;
  /** Per actor, an instrument of the owner's with nothing logged, to try to delete. */
  instrumentToDelete: Record<Actor, number>;
  /** An unshared spec of the owner's (only its builder and reviewers may read it). */
  specId: number;
  /** The cited depth reading: every `:readingId` except DELETE's. */
  readingId: number;
  /** The rotor-height reading (the clearance's second term). */
  heightReadingId: number;
  /** Per actor, a reading no clearance uses and no story cites, to try to delete. */
  readingToDelete: Record<Actor, number>;
  /** The cited end-float clearance: every `:clearanceId` except DELETE's. */
  clearanceId: number;
  /** Per actor, a clearance no story cites, to try to delete. */
  clearanceToDelete: Record<Actor, number>;
  /** A draft citing the reading and the clearance, with a kept revision and an image. */
  storyId: number;
  /** The number of that story's kept revision (`:number`). */
  revisionNumber: number;
  /** An image of that story (`:imageId`). */
  imageId: number;
  /** Per actor, a draft to try to delete. */
  storyToDelete: Record<Actor, number>;
  /** Per actor, a draft to try to send for review. */
  storyToSubmit: Record<Actor, number>;
  /** Per actor, a story in review that nobody holds, to try to take for review. */
  storyToClaim: Record<Actor, number>;
  /** Per actor, a story in review held by the moderator, to try to let go. */
  storyToRelease: Record<Actor, number>;
  /**
   * Per actor, a story in review to record a check on: the moderator's and the admin's are held
   * by themselves (a check needs the hold), everyone else's by the moderator.
   */
  storyToCheck: Record<Actor, number>;
  /** A story in review held by the moderator, whose depth reading the moderator flagged. */
  flaggedStoryId: number;
  /** That flag (`:checkId`), for the builder to answer. */
  checkId: number;
  /** A signed one-click unsubscribe token for `userId`'s mail about the owner (a real follows row). */
  unsubscribeToken: string;
  /** The public side: a story of the owner's published through review, and two that are not public. */
  published: PublishedFixtures;
}

/** What the public routes name: one published story and what it cites. */
export interface PublishedFixtures {
  /** The owner's login (`:login` of the builder profile and feed). */
  ownerLogin: string;
  /** Its build, which has no other entry (`:buildId` of the public build). */
  buildId: number;
  /** The part its readings were taken on (`:partId` of the sheet, PDF and verification). */
  partId: number;
  /** The clip its readings cite (`:clipId` of the public media). */
  clipId: number;
  /** An image its published body shows (`:imageId` of a public story image). */
  imageId: number;
  storyId: number;
  title: string;
  /** Its public revision (the `rev` a printed sheet carries). */
  revision: number;
  /** A question a reader asked on it, for the builder to answer (`:questionId`). */
  questionId: number;
  /** Per actor, a visible question on it to try to hide. */
  questionToHide: Record<Actor, number>;
  /** Per actor, a question on it that a moderator hid, to try to show again. */
  questionToUnhide: Record<Actor, number>;
  /** Stories of the owner's that are not public, each in a build of its own with nothing public. */
  notPublic: Record<'draft' | 'withdrawn', { storyId: number; title: string; revision: number; buildId: number; partId: number; clipId: number }>;
}

/**
 * Builds the fixtures once (call in beforeAll): as the owning builder, a build with a part, a
 * processed clip with a moment, instruments, a spec, readings, a clearance and stories; as the
 * moderator and admin, the holds and the flag the review routes need; a fresh follower account
 * that follows the owner; and one throwaway per actor for every route whose success changes
 * state, so that one actor's success cannot change what another actor's request answers.
 * Independent steps run in parallel.
 */
export async function buildMatrixFixtures(
  t: TestApp,
  sessions: Record<Actor, Session>,
  files: { clip: string; image: string },
): Promise<MatrixFixtures> {
  const { owner, moderator, admin } = sessions;
  const signedIn = actors.filter((a): a is Exclude<Actor, 'anonymous'> => a !== 'anonymous');

  // Independent of the rest (builds of its own), so it is made alongside.
  const publishedSide = buildPublishedFixtures(t, sessions, files);
  const [main, spare, instrumentId, micId, instrumentToDelete, spec, actorIdList] = await Promise.all([
    createBuild(owner, 'Authorization matrix build'),
    createBuild(owner, 'Authorization matrix throwaway build'),
    addInstrument(owner, 'Matrix depth micrometer 0–6 in', 'depth-micrometer'),
    addInstrument(owner, 'Matrix outside micrometer 0–1 in', 'outside-micrometer'),
    perActor((actor) => addInstrument(owner, `Matrix spare micrometer for ${actor}`, 'outside-micrometer')),
    expectStatus<{ spec: { id: number; latest: { id: number } } }>(
      'spec',
      201,
      send(owner, 'post', '/api/specs', {
        name: 'Matrix pump end float (invented)',
        appliesTo: 'Invented rotor oil pump',
        shared: false,
        unit: 'in',
        min: '0.003',
        max: '0.005',
        source: { kind: 'manual', text: 'Matrix manual (invented), p. 1' },
      }),
    ),
    Promise.all(signedIn.map(async (a) => (await sessions[a].agent.get('/api/me').expect(200)).body.user.id as number)),
  ]);
  const actorIds = Object.fromEntries(signedIn.map((a, i) => [a, actorIdList[i]!])) as MatrixFixtures['actorIds'];
  const { buildId, partId } = main;

  const clipId = await uploadClip(owner, buildId, files.clip);
  const clipToDelete = {} as Record<Actor, number>;
  for (const actor of actors) clipToDelete[actor] = await uploadClip(owner, spare.buildId, files.clip);
  // Wait for processing, so no worker is still writing a clip's files when a test deletes it.
  await Promise.all([clipId, ...Object.values(clipToDelete)].map((id) => waitUntilReady(owner, id)));

  const momentId = await addMoment(owner, clipId, 500, 'Matrix moment');
  const momentToDelete = await perActor((actor, i) => addMoment(owner, clipId, 1000 + i, `Throwaway moment for ${actor}`));

  const reading = (key: string, instrument: number, value: string, name: string) =>
    addReading(owner, buildId, { key, name, value, momentId, instrumentId: instrument, partId });
  const [readingId, heightReadingId, readingToDelete] = await Promise.all([
    reading(matrixKeys.depth, instrumentId, '0.5642', 'Bore depth'),
    reading(matrixKeys.height, micId, '0.5595', 'Rotor height'),
    perActor((actor) => reading(keyFor('matrix-spare', actor), micId, '0.5595', `Spare rotor height for ${actor}`)),
  ]);
  const terms = [
    { readingId, sign: 1 },
    { readingId: heightReadingId, sign: -1 },
  ];
  const [clearanceId, clearanceToDelete] = await Promise.all([
    addClearance(owner, buildId, { key: matrixKeys.clearance, name: 'End float', terms, specVersionId: spec.spec.latest.id }),
    perActor((actor) => addClearance(owner, buildId, { key: keyFor('matrix-spare-gap', actor), name: `Spare end float for ${actor}`, terms })),
  ]);

  const storyId = await addStory(owner, buildId, 'Matrix diary entry');
  const [revision, image] = await Promise.all([
    expectStatus<{ revision: { number: number } }>('kept revision', 201, send(owner, 'post', `/api/stories/${storyId}/revisions`)),
    expectStatus<{ image: { id: number } }>(
      'story image',
      201,
      owner.agent.post(`/api/stories/${storyId}/images`).set('x-csrf-token', owner.token).attach('file', files.image, 'matrix.png'),
    ),
  ]);

  const title = (what: string, actor: Actor) => `Matrix ${what} (${actor})`;
  const [storyToDelete, storyToSubmit, storyToClaim, storyToRelease, storyToCheck, flaggedStoryId] = await Promise.all([
    perActor((actor) => addStory(owner, buildId, title('draft to delete', actor))),
    perActor((actor) => addStory(owner, buildId, title('draft to send', actor))),
    perActor((actor) => storyInReview(owner, buildId, title('story to take', actor))),
    perActor((actor) => storyInReview(owner, buildId, title('story to let go', actor), moderator)),
    perActor((actor) => storyInReview(owner, buildId, title('story to check', actor), actor === 'admin' ? admin : moderator)),
    storyInReview(owner, buildId, 'Matrix story with a flag', moderator),
  ]);
  const flag = await expectStatus<{ check: { id: number } }>(
    'flag',
    201,
    send(moderator, 'post', '/api/review/checks', {
      storyId: flaggedStoryId,
      subjectType: 'reading',
      subjectId: readingId,
      state: 'flagged',
      comment: 'The thimble is not readable in the footage at this moment.',
    }),
  );

  const person = freshAccount(t, 'matrix-user');
  const newcomer = await signIn(t, person.login);
  const me = await newcomer.get('/api/me').expect(200);
  if (me.body.user.role !== 'follower') throw new Error(`a fresh account should be a follower, got ${me.body.user.role}`);
  const userId = me.body.user.id as number;
  // No route creates a follow, so the row is written with the model the unsubscribe route reads.
  await Follow.create({ followerId: userId, builderId: actorIds.owner });

  return {
    buildId,
    partId,
    clipId,
    momentId,
    userId,
    actorIds,
    clipToDelete,
    momentToDelete,
    instrumentId,
    instrumentToDelete,
    specId: spec.spec.id,
    readingId,
    heightReadingId,
    readingToDelete,
    clearanceId,
    clearanceToDelete,
    storyId,
    revisionNumber: revision.revision.number,
    imageId: image.image.id,
    storyToDelete,
    storyToSubmit,
    storyToClaim,
    storyToRelease,
    storyToCheck,
    flaggedStoryId,
    checkId: flag.check.id,
    unsubscribeToken: signUnsubscribe(t.config.sessionSecret, userId, actorIds.owner),
    published: await publishedSide,
  };
}

/** Asks a question on a published story as `s`; resolves to its id. */
async function ask(s: Session, storyId: number, body: string): Promise<number> {
  const res = await expectStatus<{ question: { id: number } }>(`question on story ${storyId}`, 201, send(s, 'post', `/api/public/stories/${storyId}/questions`, { body }));
  return res.question.id;
}

/**
 * The public side, made through the API: a story of the owner's published through review (its
 * own build, clip and part), questions on it asked by fresh readers (an account may ask five
 * in ten minutes, so five at most each), some of them hidden by the moderator; every signed-in
 * actor but the owner following the owner; and, in builds of their own, a draft and a story
 * published and then withdrawn, so nothing of theirs is public.
 */
async function buildPublishedFixtures(t: TestApp, sessions: Record<Actor, Session>, files: { clip: string; image: string }): Promise<PublishedFixtures> {
  const { owner, moderator } = sessions;
  const clip = files.clip;
  const [pub, draft, withdrawn] = await Promise.all([
    makeReviewFixture(owner, { clipFile: clip, title: 'Matrix published build (invented)' }),
    makeReviewFixture(owner, { clipFile: clip, title: 'Matrix draft-only build (invented)' }),
    makeReviewFixture(owner, { clipFile: clip, title: 'Matrix withdrawn build (invented)' }),
  ]);
  // An image in the published story's body, so the publication shows it.
  const image = await expectStatus<{ image: { id: number; markdown: string } }>(
    'published story image',
    201,
    owner.agent.post(`/api/stories/${pub.story.id}/images`).set('x-csrf-token', owner.token).attach('file', files.image, 'matrix-published.png'),
  );
  await expectStatus('story body with the image', 200, send(owner, 'patch', `/api/stories/${pub.story.id}`, {
    body: `${pub.story.body}\n${image.image.markdown}\n`,
    lockVersion: await storyLockVersion(owner, pub.story.id),
  }));
  // One moderator publishes one story at a time (each move takes and gives back the hold).
  const revision = await publishThroughReview(owner, moderator, pub);
  const withdrawnRevision = await publishThroughReview(owner, moderator, withdrawn);
  const pulled = await move(owner, withdrawn.story.id, 'withdraw', { reason: 'A reading needs taking again (matrix fixture).' });
  if (pulled.status !== 200) throw new Error(`fixture withdraw answered ${pulled.status}: ${JSON.stringify(pulled.body)}`);

  const readers = await Promise.all(
    [1, 2, 3].map(async (n) => {
      const agent = await signIn(t, freshAccount(t, `matrix-reader-${n}`).login);
      return { agent, token: await csrfToken(agent) } satisfies Session;
    }),
  );
  let asked = 0;
  const askNext = (what: string) => ask(readers[Math.floor(asked++ / 5)]!, pub.story.id, `Matrix question (${what}): which micrometer read the bore depth?`);
  const questionId = await askNext('to answer');
  const questionToHide = {} as Record<Actor, number>;
  const questionToUnhide = {} as Record<Actor, number>;
  for (const actor of actors) questionToHide[actor] = await askNext(`to hide, ${actor}`);
  for (const actor of actors) {
    const id = await askNext(`to show again, ${actor}`);
    await expectStatus(`hide of question ${id}`, 200, send(moderator, 'post', `/api/questions/${id}/hide`, { reason: 'Hidden for the matrix fixture.' }));
    questionToUnhide[actor] = id;
  }

  const ownerId = (await owner.agent.get('/api/me').expect(200)).body.user.id as number;
  await Promise.all(
    actors
      .filter((a) => a !== 'anonymous' && a !== 'owner')
      .map(async (a) => {
        // 200 when another file running alongside already made this seeded follower follow the owner.
        const r = await send(sessions[a], 'post', `/api/builders/${ownerId}/follow`);
        if (r.status !== 201 && r.status !== 200) throw new Error(`fixture follow of the owner by ${a} answered ${r.status}: ${JSON.stringify(r.body)}`);
      }),
  );

  const scope = (f: typeof draft, rev: number) => ({ storyId: f.story.id, title: f.story.title, revision: rev, buildId: f.buildId, partId: f.partId, clipId: f.clipId });
  return {
    ownerLogin: actorLogins.owner,
    buildId: pub.buildId,
    partId: pub.partId,
    clipId: pub.clipId,
    imageId: image.image.id,
    storyId: pub.story.id,
    title: pub.story.title,
    revision,
    questionId,
    questionToHide,
    questionToUnhide,
    // A draft has never had a public revision; 1 is what a forged sheet would print.
    notPublic: { draft: scope(draft, 1), withdrawn: scope(withdrawn, withdrawnRevision) },
  };
}
