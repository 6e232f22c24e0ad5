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
let scripted: ReviewFixture;
/** A title that would close a script element or open a comment if written into the page raw. */
const SCRIPT_TITLE = 'Pump </script><script>alert(1)</script> <!-- (invented, test)';
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
  scripted = await makeReviewFixture(owner, { clipFile, title: SCRIPT_TITLE });
  await publishThroughReview(owner, await sessionFor(t, 'moderator'), scripted);
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

  /** The schema.org data of a page: every JSON-LD script, parsed. */
  const jsonLd = (html: string) =>
    [...new JSDOM(html).window.document.querySelectorAll('script[type="application/ld+json"]')].map((el) => JSON.parse(el.textContent ?? '') as Record<string, unknown>);

  it('a public story carries schema.org Article data: headline, author, dates and its address', async () => {
    const res = await request(t.app).get(`/stories/${published.story.id}`).expect(200);
    const [article, ...more] = jsonLd(res.text);
    expect(more).toEqual([]);
    expect(article).toMatchObject({
      '@context': 'https://schema.org',
      '@type': 'Article',
      headline: published.story.title,
      url: `${t.config.publicUrl}/stories/${published.story.id}`,
      author: { '@type': 'Person', name: 'Ines Calloway' },
      publisher: { '@type': 'Organization', name: 'Benchproof' },
    });
    expect(Date.parse(String(article!.datePublished))).not.toBeNaN();
    expect(res.text).toContain(`<link rel="canonical" href="${t.config.publicUrl}/stories/${published.story.id}"`);
  });

  // OWASP ASVS 5.0 V1.2 (output encoding for the context): JSON in a script element.
  it('a title that would close the script element stays inside it, as data', async () => {
    const res = await request(t.app).get(`/stories/${scripted.story.id}`).expect(200);
    expect(res.text.match(/<script/g)).toHaveLength(1);
    expect(res.text).not.toContain('<!--');
    expect(jsonLd(res.text)[0]).toMatchObject({ headline: scripted.story.title });
    expect(scripted.story.title).toContain('</script>');
  });

  it('a draft has no schema.org data', async () => {
    const res = await request(t.app).get(`/stories/${draft.story.id}`).expect(200);
    expect(jsonLd(res.text)).toEqual([]);
  });
});
