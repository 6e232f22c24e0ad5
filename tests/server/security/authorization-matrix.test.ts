import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { listRoutes } from '../../../server/http/routes';
import { makeTestClip } from '../../support/clips';
import { actors, buildMatrixFixtures, sessionFor, type Actor, type MatrixFixtures, type Session } from '../../support/matrix-fixtures';
import { startTestApp, type TestApp } from '../../support/test-app';

/*
 * The authorization matrix: every route the app mounts (from listRoutes(), so a new route
 * cannot be missed) × six callers, with the status each must get.
 *
 * OWASP ASVS 5.0.0, chapter V8 Authorization (section numbers checked against the v5.0.0 text
 * in OWASP/ASVS, 5.0/en/0x17-V8-Authorization.md, not recalled from memory):
 *  - V8.1 Authorization Documentation, 8.1.1: the rules for function-level and data-specific
 *    access are written down. TABLE below is that document for the API, and the test fails
 *    when it and the router disagree.
 *  - V8.2 General Authorization Design, 8.2.1 (function-level access only with explicit
 *    permission: the role columns, 401/403) and 8.2.2 (data-specific access only to the data
 *    items one is entitled to, against IDOR/BOLA: the other-builder and follower columns on
 *    the owner's build, clip and moment ids, 404).
 *  - V8.3 Operation Level Authorization, 8.3.1: enforced in the server, whatever the client
 *    does; every request here is made directly against the API, no UI involved.
 *
 * Admin column: access.role() lets admins through every role check, and buildForOwner /
 * clipForOwner / momentForOwner are owner-or-admin, so an admin may change, upload into,
 * reorder and delete any builder's build, clips and moments. The table encodes that as the code
 * does it; whether an admin should author evidence in another builder's name is a product
 * question (see the REVIEW notes), not a failing cell.
 *
 * Statuses: 401 not signed in; 403 signed in but the role may not do this; 404 signed in and
 * the role may, but this build/clip/moment is not theirs to see (its existence is not confirmed,
 * the same answer as for an unknown id).
 */

type Expected = Record<Actor, number>;

// prettier-ignore
const TABLE: Record<string, Expected> = {
  // Public by design: sign-in, sign-out, health, CSRF token, the calculator.
  'GET /auth/github':                        { anonymous: 302, follower: 302, owner: 302, otherBuilder: 302, moderator: 302, admin: 302 },
  'GET /auth/github/callback':               { anonymous: 302, follower: 302, owner: 302, otherBuilder: 302, moderator: 302, admin: 302 },
  'POST /auth/sign-out':                     { anonymous: 204, follower: 204, owner: 204, otherBuilder: 204, moderator: 204, admin: 204 },
  'GET /api/health':                         { anonymous: 200, follower: 200, owner: 200, otherBuilder: 200, moderator: 200, admin: 200 },
  'GET /api/csrf-token':                     { anonymous: 200, follower: 200, owner: 200, otherBuilder: 200, moderator: 200, admin: 200 },
  'POST /api/calc':                          { anonymous: 200, follower: 200, owner: 200, otherBuilder: 200, moderator: 200, admin: 200 },
  // access.public, but answers 401 itself to a visitor.
  'GET /api/me':                             { anonymous: 401, follower: 200, owner: 200, otherBuilder: 200, moderator: 200, admin: 200 },

  // Admin only.
  'GET /api/admin/users':                    { anonymous: 401, follower: 403, owner: 403, otherBuilder: 403, moderator: 403, admin: 200 },
  'PATCH /api/admin/users/:id':              { anonymous: 401, follower: 403, owner: 403, otherBuilder: 403, moderator: 403, admin: 200 },

  // Builds. Listing and creating: role builder (admins pass every role check); the list is the caller's own.
  'GET /api/builds':                         { anonymous: 401, follower: 403, owner: 200, otherBuilder: 200, moderator: 403, admin: 200 },
  'POST /api/builds':                        { anonymous: 401, follower: 403, owner: 201, otherBuilder: 201, moderator: 403, admin: 201 },
  // Reading one: its builder and reviewers (moderator, admin); everyone else 404.
  'GET /api/builds/:buildId':                { anonymous: 401, follower: 404, owner: 200, otherBuilder: 404, moderator: 200, admin: 200 },
  // Changing or adding: only the builder (a build's figures are the builder's own; nobody,
  // admins included, writes in their name). Deleting: the builder, or an admin taking content down.
  'PATCH /api/builds/:buildId':              { anonymous: 401, follower: 403, owner: 200, otherBuilder: 404, moderator: 403, admin: 403 },

  // A build's clips.
  'GET /api/builds/:buildId/clips':          { anonymous: 401, follower: 404, owner: 200, otherBuilder: 404, moderator: 200, admin: 200 },
  'POST /api/builds/:buildId/clips':         { anonymous: 401, follower: 403, owner: 201, otherBuilder: 404, moderator: 403, admin: 403 },
  'PUT /api/builds/:buildId/clips/order':    { anonymous: 401, follower: 403, owner: 200, otherBuilder: 404, moderator: 403, admin: 403 },

  // One clip and its media: reading as for its build; changing as for its build.
  'GET /api/clips/:clipId':                  { anonymous: 401, follower: 404, owner: 200, otherBuilder: 404, moderator: 200, admin: 200 },
  'PATCH /api/clips/:clipId':                { anonymous: 401, follower: 403, owner: 200, otherBuilder: 404, moderator: 403, admin: 403 },
  'DELETE /api/clips/:clipId':               { anonymous: 401, follower: 403, owner: 204, otherBuilder: 404, moderator: 403, admin: 204 },
  'GET /api/clips/:clipId/video':            { anonymous: 401, follower: 404, owner: 200, otherBuilder: 404, moderator: 200, admin: 200 },
  'GET /api/clips/:clipId/poster':           { anonymous: 401, follower: 404, owner: 200, otherBuilder: 404, moderator: 200, admin: 200 },
  'GET /api/clips/:clipId/thumbnails':       { anonymous: 401, follower: 404, owner: 200, otherBuilder: 404, moderator: 200, admin: 200 },
  'GET /api/clips/:clipId/frame':            { anonymous: 401, follower: 404, owner: 200, otherBuilder: 404, moderator: 200, admin: 200 },
  'GET /api/clips/:clipId/chapters.vtt':     { anonymous: 401, follower: 404, owner: 200, otherBuilder: 404, moderator: 200, admin: 200 },
  'GET /api/clips/:clipId/moments':          { anonymous: 401, follower: 404, owner: 200, otherBuilder: 404, moderator: 200, admin: 200 },
  'POST /api/clips/:clipId/moments':         { anonymous: 401, follower: 403, owner: 201, otherBuilder: 404, moderator: 403, admin: 403 },

  // Moments: changed through their clip's build.
  'PATCH /api/moments/:momentId':            { anonymous: 401, follower: 403, owner: 200, otherBuilder: 404, moderator: 403, admin: 403 },
  'DELETE /api/moments/:momentId':           { anonymous: 401, follower: 403, owner: 204, otherBuilder: 404, moderator: 403, admin: 204 },
};

/** A request the public calculator answers (end float, from tests/server/calc/calc.api.test.ts). */
const calcRequest = {
  readings: {
    boreDepth: { kind: 'direct', value: 0.5642, unit: 'in', resolution: 0.0001 },
    componentHeight: { kind: 'direct', value: 0.5595, unit: 'in', resolution: 0.0001 },
  },
  terms: [
    { reading: 'boreDepth', sign: 1 },
    { reading: 'componentHeight', sign: -1 },
  ],
  spec: { min: 0.003, max: 0.005, unit: 'in' },
};

let t: TestApp;
let work: string;
let clipFile: string;
let fx: MatrixFixtures;
const sessions = {} as Record<Actor, Session>;

/**
 * What each route is sent, so a refusal is about who asks and never about a malformed request:
 * valid bodies, queries and files. Routes not named here are sent without a body.
 */
interface Shape {
  query?: string;
  body?: () => unknown;
  attach?: boolean;
  /** Path parameters that differ per actor (throwaway fixtures for destructive routes). */
  params?: (actor: Actor) => Partial<Record<string, number>>;
  /** Sent from a new session of the actor, because the request ends the session. */
  ownSession?: boolean;
}

const SHAPES: Record<string, Shape> = {
  'POST /auth/sign-out': { ownSession: true },
  'POST /api/calc': { body: () => calcRequest },
  'PATCH /api/admin/users/:id': { body: () => ({ role: 'follower' }) },
  'POST /api/builds': { body: () => ({ title: 'Matrix new build', parts: [{ name: 'Matrix crank' }] }) },
  'PATCH /api/builds/:buildId': { body: () => ({ title: 'Matrix check title' }) },
  'POST /api/builds/:buildId/clips': { attach: true },
  'PATCH /api/clips/:clipId': { body: () => ({ title: 'x' }) },
  'DELETE /api/clips/:clipId': { params: (actor) => ({ clipId: fx.clipToDelete[actor] }) },
  'GET /api/clips/:clipId/frame': { query: '?t=0.5' },
  'POST /api/clips/:clipId/moments': { body: () => ({ atMs: 100 }) },
  'PATCH /api/moments/:momentId': { body: () => ({ label: 'Matrix check label' }) },
  'DELETE /api/moments/:momentId': { params: (actor) => ({ momentId: fx.momentToDelete[actor] }) },
};

/** The clip ids of the fixture build as they are now (uploads in the matrix add some), for PUT order. */
async function currentClipIds(): Promise<number[]> {
  const res = await sessions.owner.agent.get(`/api/builds/${fx.buildId}/clips`).expect(200);
  return (res.body.items as { id: number }[]).map((c) => c.id);
}

/** Fills every `:param` of a route path; an unknown parameter fails loudly, so a new one needs a fixture. */
function fill(routePath: string, actor: Actor, shape: Shape): string {
  const params: Record<string, number | undefined> = {
    buildId: fx.buildId,
    clipId: fx.clipId,
    momentId: fx.momentId,
    id: fx.userId,
    ...shape.params?.(actor),
  };
  return routePath.replace(/:(\w+)/g, (_, name: string) => {
    const value = params[name];
    if (value === undefined) throw new Error(`no fixture for :${name} in ${routePath}; add one to the matrix fixtures`);
    return String(value);
  });
}

async function send(routeKey: string, actor: Actor) {
  const [method, routePath] = routeKey.split(' ') as [string, string];
  const shape = SHAPES[routeKey] ?? {};
  const s = shape.ownSession ? await sessionFor(t, actor) : sessions[actor];
  const url = fill(routePath, actor, shape) + (shape.query ?? '');
  const verb = method.toLowerCase() as 'get' | 'post' | 'put' | 'patch' | 'delete';
  let req = s.agent[verb](url);
  if (verb !== 'get') req = req.set('x-csrf-token', s.token);
  if (shape.attach) return { s, res: await req.attach('file', clipFile, 'matrix-upload.mp4') };
  const body = routeKey === 'PUT /api/builds/:buildId/clips/order' ? { clipIds: await currentClipIds() } : shape.body?.();
  return { s, res: await (body === undefined ? req : req.send(body as object)) };
}

beforeAll(async () => {
  work = fs.mkdtempSync(path.join(os.tmpdir(), 'benchproof-authz-matrix-'));
  clipFile = await makeTestClip({ seconds: 2, format: 'mp4-h264', dir: work });
  t = await startTestApp({}, { jobs: true });
  for (const actor of actors) sessions[actor] = await sessionFor(t, actor);
  fx = await buildMatrixFixtures(t, sessions.owner, clipFile);
}, 240_000);

afterAll(async () => {
  await t?.close();
  if (work) fs.rmSync(work, { recursive: true, force: true });
});

describe('the matrix covers exactly the routes the app mounts (ASVS 5.0.0 V8.1.1)', () => {
  const listed = () => [...new Set(listRoutes().map((r) => `${r.method} ${r.path}`))].sort();

  it('every mounted route has a row in the table, so a new route forces a decision', () => {
    const missing = listed().filter((key) => !(key in TABLE));
    expect(missing, 'routes mounted but missing from TABLE').toEqual([]);
  });

  it('every row of the table is a route the app still mounts', () => {
    const mounted = new Set(listed());
    const stale = Object.keys(TABLE).filter((key) => !mounted.has(key));
    expect(stale, 'rows in TABLE for routes that are no longer mounted').toEqual([]);
  });

  it('request shapes name only rows of the table', () => {
    expect(Object.keys(SHAPES).filter((key) => !(key in TABLE))).toEqual([]);
  });
});

// ASVS 5.0.0 V8.2.1 (function level) and V8.2.2 (data specific, IDOR/BOLA), one test per cell.
describe.each(Object.entries(TABLE))('%s', (routeKey, expected) => {
  it.each(actors.map((actor) => [actor, expected[actor]] as const))('%s → %i', async (actor, status) => {
    const { s, res } = await send(routeKey, actor);
    expect(res.status, `${routeKey} as ${actor}: ${JSON.stringify(res.body ?? '').slice(0, 300)}`).toBe(status);

    if (status === 401 || status === 403 || status === 404) {
      // A refusal is our error body, and carries no resource data.
      expect(res.body?.error?.code).toBe({ 401: 'unauthorized', 403: 'forbidden', 404: 'not_found' }[status]);
    }

    // Destructive routes: a refusal changed nothing; a success really removed the actor's own throwaway.
    if (routeKey === 'DELETE /api/clips/:clipId') {
      await sessions.owner.agent.get(`/api/clips/${fx.clipToDelete[actor]}`).expect(status === 204 ? 404 : 200);
    }
    if (routeKey === 'DELETE /api/moments/:momentId') {
      const list = await sessions.owner.agent.get(`/api/clips/${fx.clipId}/moments`).expect(200);
      const ids = (list.body.items as { id: number }[]).map((m) => m.id);
      if (status === 204) expect(ids).not.toContain(fx.momentToDelete[actor]);
      else expect(ids).toContain(fx.momentToDelete[actor]);
    }
    // Without a code from the provider both OAuth routes start the round trip at its authorize
    // endpoint, and neither signs anyone in or out.
    if (routeKey === 'GET /auth/github' || routeKey === 'GET /auth/github/callback') {
      expect(new URL(res.headers.location!).pathname).toBe('/login/oauth/authorize');
      await s.agent.get('/api/me').expect(actor === 'anonymous' ? 401 : 200);
    }
    // Sign-out ends the session it was sent from (a throwaway one), whoever sent it.
    if (routeKey === 'POST /auth/sign-out') {
      await s.agent.get('/api/me').expect(401);
    }
  });
});
