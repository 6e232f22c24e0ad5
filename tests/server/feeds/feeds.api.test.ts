import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { XMLParser } from 'fast-xml-parser';
import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { makeTestClip } from '../../support/clips';
import { sessionFor, type Session } from '../../support/matrix-fixtures';
import { fixtureBody, lockVersionOf, makeReviewFixture, publishThroughReview, type ReviewFixture } from '../../support/review-fixtures';
import { startTestApp, type TestApp } from '../../support/test-app';

let t: TestApp;
let work: string;
let owner: Session;
let moderator: Session;
let f: ReviewFixture;

/** A title with every character XML must escape, and a script tag that must stay text. */
const TRICKY_TITLE = 'Feed test: <script>alert(1)</script> & "quotes" \'too\'';

interface AtomLink { '@_rel'?: string; '@_href': string; '@_type'?: string }
interface AtomPerson { name: string; uri?: string }

const parser = new XMLParser({
  ignoreAttributes: false,
  attributeNamePrefix: '@_',
  isArray: (name) => ['entry', 'link', 'author', 'category', 'id', 'title', 'updated'].includes(name),
});

/** Elements that must appear once come as arrays, so their counts can be checked. */
interface ParsedEntry { id: unknown[]; title: unknown[]; updated: unknown[]; link: AtomLink[]; author?: AtomPerson[]; summary?: unknown; content?: unknown }
interface ParsedFeed { '@_xmlns': string; id: unknown[]; title: unknown[]; updated: unknown[]; link: AtomLink[]; author?: AtomPerson[]; entry?: ParsedEntry[] }

function parse(xml: string): { feed: ParsedFeed } {
  return parser.parse(xml) as { feed: ParsedFeed };
}
const text = (v: unknown) => (typeof v === 'object' && v !== null ? (v as { '#text': string })['#text'] : String(v));

// RFC 3339 date-time (RFC 4287 §3.3).
const RFC3339 = /^\d{4}-\d{2}-\d{2}T\d{2}:\d{2}:\d{2}(\.\d+)?(Z|[+-]\d{2}:\d{2})$/;

/** Checks the elements RFC 4287 requires of a feed and its entries. */
function expectValidAtom(xml: string) {
  const { feed } = parse(xml);
  expect(feed).toBeDefined();
  expect(feed['@_xmlns']).toBe('http://www.w3.org/2005/Atom');
  // §4.1.1: exactly one atom:id, atom:title and atom:updated.
  expect(feed.id).toHaveLength(1);
  expect(feed.title).toHaveLength(1);
  expect(feed.updated).toHaveLength(1);
  expect(String(feed.updated[0])).toMatch(RFC3339);
  // §4.2.6: the id is an IRI (ours are tag: URIs, RFC 4151).
  expect(String(feed.id[0])).toMatch(/^tag:[^,]+,\d{4}:\S+$/);
  // §4.1.1: SHOULD have one rel="self"; we also give rel="alternate" (§4.2.7.2).
  const links = feed.link;
  expect(links.filter((l) => l['@_rel'] === 'self')).toHaveLength(1);
  expect(links.filter((l) => l['@_rel'] === 'alternate').length).toBeGreaterThanOrEqual(1);
  const entries = feed.entry ?? [];
  // §4.1.1: one or more atom:author, unless every entry has one.
  const feedHasAuthor = (feed.author ?? []).length > 0;
  for (const e of entries) {
    // §4.1.2: exactly one atom:id, atom:title, atom:updated; an author unless the feed has one.
    expect(e.id).toHaveLength(1);
    expect(e.title).toHaveLength(1);
    expect(e.updated).toHaveLength(1);
    expect(String(e.updated[0])).toMatch(RFC3339);
    if (!feedHasAuthor) expect((e.author ?? []).length).toBeGreaterThan(0);
    expect((e.author as AtomPerson[])[0]!.name).toBeTruthy();
    // §4.1.2: a link rel="alternate" when there is no atom:content (we send none).
    expect(e.content).toBeUndefined();
    expect((e.link as AtomLink[]).filter((l) => l['@_rel'] === 'alternate')).toHaveLength(1);
    expect(e.summary).toBeDefined();
  }
  return { feed, entries };
}

beforeAll(async () => {
  work = fs.mkdtempSync(path.join(os.tmpdir(), 'benchproof-feeds-'));
  const clipFile = await makeTestClip({ seconds: 2, format: 'mp4-h264', dir: work });
  t = await startTestApp({}, { jobs: true });
  owner = await sessionFor(t, 'owner');
  moderator = await sessionFor(t, 'moderator');
  f = await makeReviewFixture(owner, { clipFile, title: TRICKY_TITLE });
  await publishThroughReview(owner, moderator, f);
}, 180_000);

afterAll(async () => {
  await t?.close();
  if (work) fs.rmSync(work, { recursive: true, force: true });
});

const entryFor = (entries: ParsedEntry[], storyId: number) => entries.find((e) => String(e.id[0]).endsWith(`:story/${storyId}`));

describe('the site’s Atom feed', () => {
  it('is Atom 1.0 with every element RFC 4287 requires, served as application/atom+xml', async () => {
    const res = await request(t.app).get('/feeds/stories.atom').expect(200);
    expect(res.headers['content-type']).toBe('application/atom+xml; charset=utf-8');
    const { feed, entries } = expectValidAtom(res.text);
    expect(String(feed.id[0])).toBe('tag:127.0.0.1,2026:stories');
    expect((feed.link as AtomLink[]).find((l) => l['@_rel'] === 'self')!['@_href']).toBe('http://127.0.0.1:3999/feeds/stories.atom');
    expect(entries.length).toBeGreaterThan(0);
    expect(entries.length).toBeLessThanOrEqual(50);
  });

  it('escapes what it carries: a title with markup comes back as the same text', async () => {
    const res = await request(t.app).get('/feeds/stories.atom').expect(200);
    expect(res.text).not.toContain('<script>');
    const entry = entryFor(expectValidAtom(res.text).entries, f.story.id)!;
    expect(text(entry.title[0])).toBe(`${TRICKY_TITLE}: end float`);
    expect((entry.link as AtomLink[])[0]!['@_href']).toBe(`http://127.0.0.1:3999/stories/${f.story.id}`);
    expect((entry.author as AtomPerson[])[0]).toEqual({ name: 'Ines Calloway', uri: 'http://127.0.0.1:3999/builders/demo-builder' });
  });

  it('keeps feed and entry ids stable across calls and across a new revision, whose time becomes the entry’s updated', async () => {
    const first = expectValidAtom((await request(t.app).get('/feeds/stories.atom').expect(200)).text);
    const second = expectValidAtom((await request(t.app).get('/feeds/stories.atom').expect(200)).text);
    expect(second.feed.id).toEqual(first.feed.id);
    expect(second.entries.map((e) => e.id[0])).toEqual(first.entries.map((e) => e.id[0]));

    const before = entryFor(first.entries, f.story.id)!;
    await owner.agent
      .patch(`/api/stories/${f.story.id}`)
      .set('x-csrf-token', owner.token)
      .send({ body: fixtureBody({ extra: 'Measured again the next morning.' }), lockVersion: await lockVersionOf(owner, f.story.id) })
      .expect(200);
    expect(await publishThroughReview(owner, moderator, f)).toBe(2);
    const after = expectValidAtom((await request(t.app).get('/feeds/stories.atom').expect(200)).text);
    const revised = entryFor(after.entries, f.story.id)!;
    expect(revised.id).toEqual(before.id);
    expect(after.entries.filter((e) => e.id[0] === before.id[0])).toHaveLength(1);
    expect(Date.parse(String(revised.updated[0]))).toBeGreaterThan(Date.parse(String(before.updated[0])));
    // Newest first, so the revised entry now leads and the feed's updated is its time.
    expect(after.entries[0]!.id).toEqual(before.id);
    expect(after.feed.updated).toEqual(revised.updated);
  }, 60_000);
});

describe('a builder’s Atom feed', () => {
  it('carries only that builder’s stories, with the builder as the feed’s author', async () => {
    const res = await request(t.app).get('/feeds/builders/demo-builder.atom').expect(200);
    expect(res.headers['content-type']).toBe('application/atom+xml; charset=utf-8');
    const { feed, entries } = expectValidAtom(res.text);
    expect(String(feed.id[0])).toMatch(/^tag:127\.0\.0\.1,2026:builder\/\d+$/);
    expect((feed.author as AtomPerson[])[0]!.name).toBe('Ines Calloway');
    expect(entryFor(entries, f.story.id)).toBeDefined();
    for (const e of entries) expect((e.author as AtomPerson[])[0]!.name).toBe('Ines Calloway');

    const other = expectValidAtom((await request(t.app).get('/feeds/builders/demo-builder-2.atom').expect(200)).text);
    expect(entryFor(other.entries, f.story.id)).toBeUndefined();
    const again = parse((await request(t.app).get('/feeds/builders/demo-builder.atom').expect(200)).text);
    expect(again.feed.id).toEqual(feed.id);
  });

  it('answers 404 for an unknown login and for an account that does not build', async () => {
    expect((await request(t.app).get('/feeds/builders/no-such-builder.atom')).status).toBe(404);
    expect((await request(t.app).get('/feeds/builders/demo-follower.atom')).status).toBe(404);
  });
});
