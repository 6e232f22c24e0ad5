import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { errorBodySchema } from '@shared/http/error.schema';
import { sessionFor, type Session } from '../../support/matrix-fixtures';
import { startTestApp, type TestApp } from '../../support/test-app';

/*
 * Malformed requests answer 400 `invalid_request` / `bad_request` in the one error body, never a
 * 500: impossible values are refused at the edge (shared request schemas, multer's refusals)
 * before they reach PostgreSQL, which would refuse them with an error we could only call internal.
 *
 * OWASP ASVS 5.0.0 (OWASP/ASVS 5.0/en/0x11-V2-Validation-and-Business-Logic.md and
 * 0x25-V16-Security-Logging-and-Error-Handling.md):
 *  - V2.2.1: input is validated against positive rules (ranges, formats) where it enters;
 *  - V16.5.x: errors are handled so the application answers in a defined way, not a generic failure.
 */

const t: TestApp = await startTestApp();
let anonymous: Session;
let follower: Session;
let owner: Session;
let moderator: Session;
const ids = { build: 0, story: 0, instrument: 0, spec: 0 };

async function created(s: Session, path: string, body: Record<string, unknown>): Promise<Record<string, { id: number }>> {
  const res = await s.agent.post(path).set('x-csrf-token', s.token).send(body);
  if (res.status !== 201) throw new Error(`${path} answered ${res.status}: ${JSON.stringify(res.body)}`);
  return res.body as Record<string, { id: number }>;
}

beforeAll(async () => {
  [anonymous, follower, owner, moderator] = await Promise.all([sessionFor(t, 'anonymous'), sessionFor(t, 'follower'), sessionFor(t, 'owner'), sessionFor(t, 'moderator')]);
  ids.build = (await created(owner, '/api/builds', { title: 'Malformed requests build' })).build!.id;
  ids.story = (await created(owner, `/api/builds/${ids.build}/stories`, { title: 'Malformed requests story' })).story!.id;
  ids.instrument = (
    await created(owner, '/api/instruments', { name: 'Malformed requests micrometer', kind: 'depth-micrometer', unit: 'in', resolution: '0.0001', lastCalibratedOn: '2026-01-05', calibrationIntervalDays: 365 })
  ).instrument!.id;
  ids.spec = (
    await created(owner, '/api/specs', { name: 'Malformed requests end float (invented)', unit: 'in', min: '0.0015', max: '0.0040', source: { kind: 'manual', text: 'Invented manual for the test' } })
  ).spec!.id;
});
afterAll(async () => {
  await t?.close();
});

type Who = 'anonymous' | 'follower' | 'owner' | 'moderator';
const session = (who: Who): Session => ({ anonymous, follower, owner, moderator })[who];

const impossibleInstant = '2026-13-45T99:99Z_1';
const pastInteger = '99999999999999999999';
const BOUNDARY = 'malformed-boundary';
const part = (headers: string, content: string) => `--${BOUNDARY}\r\n${headers}\r\n\r\n${content}\r\n`;
const multipart = {
  /** The closing boundary never comes: busboy's "Unexpected end of form". */
  truncated: `--${BOUNDARY}\r\nContent-Disposition: form-data; name="file"; filename="cut.bin"\r\nContent-Type: application/octet-stream\r\n\r\nnot all of it`,
  /** A part header without a name: busboy's "Malformed part header". */
  garbled: `${part('this is not a header line', 'abc')}--${BOUNDARY}--\r\n`,
  /** A file name with a NUL character, percent-encoded the RFC 5987 way (decoded by busboy). */
  /** A file name with a NUL byte as it is. */
  nulNameRaw: `${part('Content-Disposition: form-data; name="file"; filename="clip\u0000.bin"\r\nContent-Type: application/octet-stream', 'abc')}--${BOUNDARY}--\r\n`,
  nulName: `${part(`Content-Disposition: form-data; name="file"; filename*=utf-8''clip%00.bin\r\nContent-Type: application/octet-stream`, 'abc')}--${BOUNDARY}--\r\n`,
};

interface Case {
  name: string;
  who: Who;
  method: 'get' | 'patch' | 'post';
  url: () => string;
  body?: () => Record<string, unknown>;
  /** A raw multipart body; `noBoundary` sends one without its boundary parameter. */
  multipart?: keyof typeof multipart | 'noBoundary';
  /** What the error message must say, when the case is about one thing in particular. */
  says?: RegExp;
}

const uploads = [
  { route: 'clip upload', url: () => `/api/builds/${ids.build}/clips` },
  { route: 'story image upload', url: () => `/api/stories/${ids.story}/images` },
];

const cases: Case[] = [
  // V2.2.1: a list cursor names a real instant (month 13, day 45, 99:99 are refused), not a 500 from PostgreSQL's timestamptz.
  { name: 'public list ?before= with an impossible date', who: 'anonymous', method: 'get', url: () => `/api/public/stories?before=${impossibleInstant}` },
  // V2.2.1: the same cursor on the following list.
  { name: 'following list ?before= with an impossible date', who: 'follower', method: 'get', url: () => `/api/public/stories/following?before=${impossibleInstant}` },
  // V2.2.1: the review queue's `after` cursor.
  { name: 'review queue ?after= with an impossible date', who: 'moderator', method: 'get', url: () => `/api/review/queue?after=${impossibleInstant}` },
  // V2.2.1: February 30th is not a day either.
  { name: 'public list ?before= on February 30th', who: 'anonymous', method: 'get', url: () => '/api/public/stories?before=2026-02-30T10:00:00.000000Z_1' },
  // V2.2.1: a cursor's id is an INTEGER.
  { name: 'public list ?before= with an id past INTEGER', who: 'anonymous', method: 'get', url: () => '/api/public/stories?before=2026-03-01T10:00:00.000000Z_2147483648' },
  // V2.2.1: PostgreSQL text cannot hold NUL (a tag filter).
  { name: 'public list ?tag= with a NUL', who: 'anonymous', method: 'get', url: () => '/api/public/stories?tag=%00' },
  // V2.2.1: … nor a search.
  { name: 'public list ?q= with a NUL', who: 'anonymous', method: 'get', url: () => '/api/public/stories?q=%00' },
  // V2.2.1: … nor a builder's login.
  { name: 'public list ?builder= with a NUL', who: 'anonymous', method: 'get', url: () => '/api/public/stories?builder=a%00b' },
  // V2.2.1: … nor the spec library's search.
  { name: 'spec list ?q= with a NUL', who: 'owner', method: 'get', url: () => '/api/specs?q=%00' },
  // V2.2.1: a story's tags are text: no NUL when saving.
  { name: 'story PATCH with a NUL in a tag', who: 'owner', method: 'patch', url: () => `/api/stories/${ids.story}`, body: () => ({ lockVersion: 1, tags: { machine: ['a\u0000b'], component: [], operation: [] } }) },
  // V2.2.1: … nor when creating one.
  { name: 'story POST with a NUL in a tag', who: 'owner', method: 'post', url: () => `/api/builds/${ids.build}/stories`, body: () => ({ title: 'NUL tag', tags: { machine: [], component: ['\u0000'], operation: [] } }) },
  // V2.2.1: … nor in its title or body.
  { name: 'story PATCH with a NUL in the body', who: 'owner', method: 'patch', url: () => `/api/stories/${ids.story}`, body: () => ({ lockVersion: 1, body: 'end float\u0000' }) },
  // V2.2.1: the audit log's keyset id stays within BIGINT.
  { name: 'review audit ?before= past BIGINT', who: 'moderator', method: 'get', url: () => `/api/review/audit?before=${pastInteger}` },
  // V2.2.1: … on a story's audit list too.
  { name: 'story audit ?before= past BIGINT', who: 'moderator', method: 'get', url: () => `/api/stories/${ids.story}/audit?before=${pastInteger}` },
  // V2.2.1: an id in a path is an INTEGER (≤ 2147483647).
  { name: 'GET /api/stories/:storyId past INTEGER (20 digits)', who: 'owner', method: 'get', url: () => `/api/stories/${pastInteger}` },
  // V2.2.1: … one past the column's maximum.
  { name: 'GET /api/stories/:storyId = 2147483648', who: 'owner', method: 'get', url: () => '/api/stories/2147483648' },
  // V2.2.1: … on the public side too.
  { name: 'GET /api/public/stories/:storyId = 2147483648', who: 'anonymous', method: 'get', url: () => '/api/public/stories/2147483648' },
  // V2.2.1: … and in a keyset query id.
  { name: 'story list ?before= = 2147483648', who: 'owner', method: 'get', url: () => `/api/builds/${ids.build}/stories?before=2147483648` },
  // V2.2.1: a lock version is an INTEGER column.
  { name: 'story PATCH lockVersion 2147483648', who: 'owner', method: 'patch', url: () => `/api/stories/${ids.story}`, body: () => ({ lockVersion: 2147483648, title: 'Too far' }) },
  // V2.2.1: … on instruments.
  { name: 'instrument PATCH lockVersion 2147483648', who: 'owner', method: 'patch', url: () => `/api/instruments/${ids.instrument}`, body: () => ({ lockVersion: 2147483648, note: 'Too far' }) },
  // V2.2.1: … and on specs.
  { name: 'spec PATCH lockVersion 2147483648', who: 'owner', method: 'patch', url: () => `/api/specs/${ids.spec}`, body: () => ({ lockVersion: 2147483648, appliesTo: 'Too far' }) },
  ...uploads.flatMap(({ route, url }): Case[] => [
    // V2.2.1 / V16.5: a multipart body cut short is the sender's fault, told in the error contract.
    { name: `${route}: truncated multipart body`, who: 'owner', method: 'post', url, multipart: 'truncated', says: /cut short or garbled \(Unexpected end of form\)/ },
    // V2.2.1 / V16.5: … and a garbled one.
    { name: `${route}: garbled part header`, who: 'owner', method: 'post', url, multipart: 'garbled', says: /Malformed part header/ },
    // V2.2.1 / V16.5: … and one without its boundary.
    { name: `${route}: multipart without a boundary`, who: 'owner', method: 'post', url, multipart: 'noBoundary', says: /Boundary not found/ },
    // V2.2.1: an upload's file name is text PostgreSQL must store: no NUL.
    { name: `${route}: NUL in the file name`, who: 'owner', method: 'post', url, multipart: 'nulName', says: /file name must not contain a NUL/ },
    // V2.2.1: … and sent as a raw byte, which busboy already refuses as a malformed part header.
    { name: `${route}: raw NUL byte in the file name`, who: 'owner', method: 'post', url, multipart: 'nulNameRaw', says: /Malformed part header/ },
  ]),
];

describe('malformed requests answer 400, never 500 (ASVS 5.0.0 V2.2.1, V16.5)', () => {
  it.each(cases)('$name', async (c) => {
    const s = session(c.who);
    let req = s.agent[c.method](c.url());
    if (c.method !== 'get') req = req.set('x-csrf-token', s.token);
    if (c.multipart) {
      req = req
        .set('Content-Type', c.multipart === 'noBoundary' ? 'multipart/form-data' : `multipart/form-data; boundary=${BOUNDARY}`)
        .send(Buffer.from(c.multipart === 'noBoundary' ? multipart.garbled : multipart[c.multipart]));
    } else if (c.body) {
      req = req.send(c.body());
    }
    const res = await req;
    expect(res.status, `${c.name}: ${JSON.stringify(res.body)}`).toBe(400);
    const body = errorBodySchema.parse(res.body);
    expect(['invalid_request', 'bad_request']).toContain(body.error.code);
    if (c.says) expect(body.error.message).toMatch(c.says);
    expect(body.error.message).not.toMatch(/Sequelize|SELECT |syntax|node_modules|\bat \w+ \(/);
  });

  it('still takes the cursors the lists hand out, and the largest INTEGER id', async () => {
    await anonymous.agent.get('/api/public/stories?before=2026-03-01T10:00:00.123456Z_2147483647').expect(200);
    await moderator.agent.get('/api/review/queue?after=2026-03-01T10:00:00.123Z_5').expect(200);
    await moderator.agent.get('/api/review/audit?before=9223372036854775807').expect(200);
    await owner.agent.get('/api/stories/2147483647').expect(404);
  });
});
