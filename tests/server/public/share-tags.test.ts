import fs from 'node:fs';
import { createRequire } from 'node:module';
import os from 'node:os';
import path from 'node:path';
import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { makeTestClip } from '../../support/clips';
import { sessionFor, type Session } from '../../support/matrix-fixtures';
import { makeReviewFixture, publishThroughReview, type ReviewFixture } from '../../support/review-fixtures';
import { startTestApp, type TestApp } from '../../support/test-app';

// jsdom ships no type declarations; only its constructor and window.document are used here.
const { JSDOM } = createRequire(import.meta.url)('jsdom') as { JSDOM: new (html: string) => { window: { document: Document } } };

/*
 * Link previews: crawlers run no scripts, so the server writes a public story's Open Graph and
 * Twitter card tags into the HTML it sends for /stories/:id (and for a claim's address below it).
 * A story that is not public gets the plain page, with nothing of it in the head.
 */

let t: TestApp;
let work: string;
let owner: Session;
let published: ReviewFixture;
let draft: ReviewFixture;
let dollars: ReviewFixture;
/** Every special pattern of a string replacement (ECMAScript GetSubstitution): $$ $& $` $' $1 $<name>. */
const DOLLAR_TITLE = "Pump $$ $& $` $' $1 $<x> (invented, test)";

beforeAll(async () => {
  work = fs.mkdtempSync(path.join(os.tmpdir(), 'benchproof-share-'));
  // A stand-in for the built client: only its <head> matters here.
  const clientDir = path.join(work, 'client');
  fs.mkdirSync(clientDir);
  fs.writeFileSync(path.join(clientDir, 'index.html'), '<!doctype html><html lang="en"><head><title>Benchproof</title></head><body><div id="root"></div></body></html>');
  const clipFile = await makeTestClip({ seconds: 2, format: 'mp4-h264', dir: work });
  t = await startTestApp({ CLIENT_DIR: clientDir }, { jobs: true });
  owner = await sessionFor(t, 'owner');
  published = await makeReviewFixture(owner, { clipFile, title: 'Invented pump, shared (test)' });
  await publishThroughReview(owner, await sessionFor(t, 'moderator'), published);
  draft = await makeReviewFixture(owner, { clipFile, title: 'Invented pump, still a draft (test)' });
  dollars = await makeReviewFixture(owner, { clipFile, title: DOLLAR_TITLE });
  await publishThroughReview(owner, await sessionFor(t, 'moderator'), dollars);
}, 240_000);
afterAll(async () => {
  await t?.close();
  if (work) fs.rmSync(work, { recursive: true, force: true });
});

const meta = (html: string, key: string) => new JSDOM(html).window.document.querySelector(`meta[property="${key}"], meta[name="${key}"]`)?.getAttribute('content') ?? null;

describe('share tags in the served HTML', () => {
  it.each(['', '/claims/clearance:end-float'])('a public story at /stories/:id%s carries its title, summary, address and card', async (suffix) => {
    const res = await request(t.app).get(`/stories/${published.story.id}${suffix}`).expect(200);
    expect(res.headers['content-type']).toMatch(/text\/html/);
    expect(meta(res.text, 'og:title')).toBe(published.story.title);
    expect(meta(res.text, 'og:description')).toBe('End float of the invented pump, as supplied.');
    expect(meta(res.text, 'og:url')).toBe(`${t.config.publicUrl}/stories/${published.story.id}`);
    expect(meta(res.text, 'twitter:card')).toMatch(/^summary/);
    expect(res.text).toContain('<div id="root"></div>');
  });

  // OWASP ASVS 5.0 V1.2 (output encoding for the context): the title lands in the page as written.
  it('a title holding every $ pattern of a string replacement lands in the page as written, and the page stays whole', async () => {
    const res = await request(t.app).get(`/stories/${dollars.story.id}`).expect(200);
    expect(meta(res.text, 'og:title')).toBe(dollars.story.title);
    expect(res.text.match(/<head>/g)).toHaveLength(1);
    expect(res.text.match(/<div id="root"><\/div>/g)).toHaveLength(1);
    expect(res.text.endsWith('</html>')).toBe(true);
  });

  it('a draft gets the plain page with nothing of the story in it', async () => {
    const res = await request(t.app).get(`/stories/${draft.story.id}`).expect(200);
    expect(meta(res.text, 'og:title')).toBeNull();
    expect(res.text).not.toContain(draft.story.title);
  });
});
