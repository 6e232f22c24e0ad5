import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import AxeBuilder from '@axe-core/playwright';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { launchBrowser } from '../../scripts/lib/chromium';
import { repoRoot } from '../../scripts/lib/bootstrap';
import { Build } from '../../server/features/builds/build.model';
import { User } from '../../server/features/users/user.model';
import { startBrowserApp } from '../support/browser-app';
import { makeTestClip } from '../support/clips';
import { sessionFor } from '../support/matrix-fixtures';
import { checkSubject, makeReviewFixture, move, publishThroughReview } from '../support/review-fixtures';

/*
 * axe-core (through @axe-core/playwright) on each main page, as the role that uses it. The suite
 * fails on any violation axe rates serious or critical; moderate and minor ones are printed.
 */

let site: Awaited<ReturnType<typeof startBrowserApp>>;
let browser: Awaited<ReturnType<typeof launchBrowser>>;
const artifacts = path.join(repoRoot, 'tests/artifacts');

let work: string;

beforeAll(async () => {
  site = await startBrowserApp({ jobs: true });
  browser = await launchBrowser();
  fs.mkdirSync(artifacts, { recursive: true });
  work = fs.mkdtempSync(path.join(os.tmpdir(), 'benchproof-axe-'));
  const clipFile = await makeTestClip({ seconds: 2, format: 'mp4-h264', dir: work, name: 'axe-pump' });
  const owner = await sessionFor(site, 'owner');
  const moderator = await sessionFor(site, 'moderator');
  // Sent back with a flag and a reason.
  const back = await makeReviewFixture(owner, { clipFile, title: 'Axe check: sent back (test)' });
  expect((await move(owner, back.story.id, 'submit')).status).toBe(200);
  await moderator.agent.post(`/api/review/stories/${back.story.id}/claim`).set('x-csrf-token', moderator.token).expect(200);
  expect((await checkSubject(moderator, back.story.id, 'reading', back.readings.height.id, 'flagged', 'the thimble is not in the still')).status).toBe(201);
  expect((await move(moderator, back.story.id, 'request-changes', { reason: 'Show the thimble at the rotor height.' })).status).toBe(200);
  stories['changes-requested'] = back.story.id;
  // In review, not yet taken.
  const waiting = await makeReviewFixture(owner, { clipFile, title: 'Axe check: in review (test)' });
  expect((await move(owner, waiting.story.id, 'submit')).status).toBe(200);
  stories['in-review'] = waiting.story.id;
  // Published.
  const shown = await makeReviewFixture(owner, { clipFile, title: 'Axe check: published (test)' });
  await publishThroughReview(owner, moderator, shown);
  stories.published = shown.story.id;
}, 300_000);
afterAll(async () => {
  await browser?.dispose();
  await site?.close();
  if (work) fs.rmSync(work, { recursive: true, force: true });
});

/** Stories made through the API in the states the hand-offs need (invented test data). */
const stories = { 'changes-requested': 0, 'in-review': 0, published: 0 };

async function demoBuildId() {
  const owner = await User.findOne({ where: { login: 'demo-builder' } });
  return (await Build.findOne({ where: { ownerId: owner!.id }, order: [['id', 'ASC']] }))!.id;
}

const pages: { as: string | null; path: string | (() => Promise<string>); ready: string }[] = [
  { as: null, path: '/', ready: 'main' },
  { as: null, path: '/sign-in', ready: 'main' },
  { as: null, path: '/calculator', ready: 'main' },
  { as: 'demo-builder', path: '/builds', ready: 'main table, main [role=status]' },
  { as: 'demo-builder', path: async () => `/builds/${await demoBuildId()}`, ready: 'main h1' },
  { as: 'demo-builder', path: async () => `/builds/${await demoBuildId()}/stories`, ready: 'main h1' },
  { as: 'demo-builder', path: '/instruments', ready: 'main h1' },
  { as: 'demo-builder', path: '/specs', ready: 'main h1' },
  { as: 'demo-moderator', path: '/review', ready: 'main h1' },
  { as: 'demo-admin', path: '/admin/users', ready: 'main h1' },
  { as: 'demo-admin', path: '/admin/outbox', ready: 'main h1' },
  // The hand-offs: the editor of a story sent back (reason and flags first), the review screen
  // for its builder and for a moderator, and a published story as a reader sees it.
  { as: 'demo-builder', path: async () => `/stories/${stories['changes-requested']}/edit`, ready: 'main h1' },
  { as: 'demo-builder', path: async () => `/review/stories/${stories['changes-requested']}`, ready: 'main h1' },
  { as: 'demo-moderator', path: async () => `/review/stories/${stories['in-review']}`, ready: 'main h1' },
  { as: null, path: async () => `/stories/${stories.published}`, ready: 'main h1' },
];

describe('the axe harness', () => {
  it('does find a violation where there is one (an image without alt text, a button without a name)', async () => {
    const page = await browser.newPage();
    try {
      await page.setContent('<!doctype html><html lang="en"><head><title>t</title></head><body><main><img src="data:image/gif;base64,R0lGODlhAQABAAAAACw="><button></button></main></body></html>');
      const results = await new AxeBuilder({ page }).analyze();
      expect(results.violations.map((v) => v.id)).toEqual(expect.arrayContaining(['image-alt', 'button-name']));
    } finally {
      await page.close();
    }
  });
});

describe('main pages pass axe-core with no serious or critical violations', () => {
  it.each(pages.map((p, i) => [`${p.as ?? 'anonymous'} ${typeof p.path === 'string' ? p.path : `(a demo page, #${i + 1})`}`, p] as const))('%s', async (_name, p) => {
    await browser.clearCookies();
    const page = await browser.newPage();
    page.setDefaultTimeout(15_000);
    try {
      const target = typeof p.path === 'string' ? p.path : await p.path();
      await page.goto(p.as ? `${site.url}/auth/github?login=${p.as}&returnTo=${encodeURIComponent(target)}` : `${site.url}${target}`);
      await page.locator(p.ready).first().waitFor();
      await page.waitForLoadState('networkidle');
      const results = await new AxeBuilder({ page }).withTags(['wcag2a', 'wcag2aa', 'wcag21a', 'wcag21aa']).analyze();
      const bad = results.violations.filter((v) => v.impact === 'serious' || v.impact === 'critical');
      for (const v of results.violations.filter((x) => !bad.includes(x))) console.log(`[axe ${v.impact}] ${target}: ${v.id} — ${v.help} (${v.nodes.length})`);
      expect(bad.map((v) => `${v.impact} ${v.id}: ${v.help} — ${v.nodes.slice(0, 3).map((n) => n.target.join(' ')).join(' | ')}`)).toEqual([]);
    } finally {
      await page.close();
    }
  }, 60_000);
});
