import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { XMLParser } from 'fast-xml-parser';
import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { makeTestClip } from '../../support/clips';
import { sessionFor, type Session } from '../../support/matrix-fixtures';
import { makeReviewFixture, move, publishThroughReview, type ReviewFixture } from '../../support/review-fixtures';
import { startTestApp, type TestApp } from '../../support/test-app';

/*
 * For search engines: /sitemap.xml lists the public pages (sitemaps.org protocol 0.9) and nothing
 * else; /robots.txt (RFC 9309) keeps crawlers out of the private screens and names the sitemap.
 */

let t: TestApp;
let work: string;
let owner: Session;
let published: ReviewFixture;
let draft: ReviewFixture;
let withdrawn: ReviewFixture;

beforeAll(async () => {
  work = fs.mkdtempSync(path.join(os.tmpdir(), 'benchproof-sitemap-'));
  const clipFile = await makeTestClip({ seconds: 2, format: 'mp4-h264', dir: work });
  t = await startTestApp({}, { jobs: true });
  owner = await sessionFor(t, 'owner');
  const moderator = await sessionFor(t, 'moderator');
  published = await makeReviewFixture(owner, { clipFile, title: 'Invented pump, in the sitemap (test)' });
  await publishThroughReview(owner, moderator, published);
  draft = await makeReviewFixture(owner, { clipFile, title: 'Invented pump, a draft (test)' });
  withdrawn = await makeReviewFixture(owner, { clipFile, title: 'Invented pump, withdrawn (test)' });
  await publishThroughReview(owner, moderator, withdrawn);
  expect((await move(owner, withdrawn.story.id, 'withdraw', { reason: 'to be measured again' })).status).toBe(200);
}, 240_000);
afterAll(async () => {
  await t?.close();
  if (work) fs.rmSync(work, { recursive: true, force: true });
});

describe('the sitemap', () => {
  it('lists the home page, each public story with its day, its build and its builder, and nothing that is not public', async () => {
    const res = await request(t.app).get('/sitemap.xml').expect(200);
    expect(res.headers['content-type']).toMatch(/^application\/xml/);
    const doc = new XMLParser().parse(res.text) as { urlset: { url: { loc: string; lastmod?: string }[] | { loc: string } } };
    const urls = ([] as { loc: string; lastmod?: string }[]).concat(doc.urlset.url);
    const locs = urls.map((u) => u.loc);
    const base = t.config.publicUrl;
    expect(locs).toContain(`${base}/`);
    const story = urls.find((u) => u.loc === `${base}/stories/${published.story.id}`);
    expect(story?.lastmod).toMatch(/^\d{4}-\d{2}-\d{2}$/);
    expect(locs).toContain(`${base}/public/builds/${published.buildId}`);
    expect(locs).toContain(`${base}/builders/demo-builder`);
    expect(locs).not.toContain(`${base}/stories/${draft.story.id}`);
    expect(locs).not.toContain(`${base}/stories/${withdrawn.story.id}`);
    expect(new Set(locs).size).toBe(locs.length);
    expect(res.text.startsWith('<?xml version="1.0" encoding="UTF-8"?>')).toBe(true);
    expect(res.text).toContain('xmlns="http://www.sitemaps.org/schemas/sitemap/0.9"');
  });
});

describe('robots.txt', () => {
  it('lets crawlers read the public pages, keeps them out of the private ones, and names the sitemap', async () => {
    const res = await request(t.app).get('/robots.txt').expect(200);
    expect(res.headers['content-type']).toMatch(/^text\/plain/);
    const lines = res.text.split('\n');
    expect(lines[0]).toBe('User-agent: *');
    for (const closed of ['/api/', '/auth/', '/admin/', '/review', '/builds', '/stories/*/edit']) expect(lines).toContain(`Disallow: ${closed}`);
    expect(lines).not.toContain('Disallow: /stories/');
    expect(lines).toContain(`Sitemap: ${t.config.publicUrl}/sitemap.xml`);
  });
});
