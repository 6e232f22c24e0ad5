import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { SNIPPET_MARK_END, SNIPPET_MARK_START } from '@shared/public/search-snippet';
import { launchBrowser } from '../../scripts/lib/chromium';
import { User } from '../../server/features/users/user.model';
import { startBrowserApp } from '../support/browser-app';
import { makeTestClip } from '../support/clips';
import { sessionFor } from '../support/matrix-fixtures';
import { fixtureBody, makeReviewFixture, publishThroughReview, sessionWithRole, type ReviewFixture } from '../support/review-fixtures';

/*
 * A reader searches the home page for "end float" and finds a story like the demo one (the
 * invented oil pump of tests/support/review-fixtures.ts, its end float checked with feeler blades),
 * with the words around the match marked. Other files publish the same fixture, so the search is
 * narrowed to this file's builder with the form's Builder box.
 */
let site: Awaited<ReturnType<typeof startBrowserApp>>;
let browser: Awaited<ReturnType<typeof launchBrowser>>;
let work: string;
let fixture: ReviewFixture;
let login: string;
const TITLE = 'Invented twin crank (search test)';

beforeAll(async () => {
  work = fs.mkdtempSync(path.join(os.tmpdir(), 'benchproof-browser-search-'));
  site = await startBrowserApp({ jobs: true });
  browser = await launchBrowser();
  const builder = await sessionWithRole(site, 'builder', 'search-reader');
  const moderator = await sessionFor(site, 'moderator');
  const clipFile = await makeTestClip({ seconds: 2, format: 'mp4-h264', dir: work, name: 'search-reader' });
  fixture = await makeReviewFixture(builder, {
    clipFile,
    title: TITLE,
    body: fixtureBody({ extra: 'The thrust washers went in dry, and the end float was read again with the feeler blades.' }),
  });
  expect(await publishThroughReview(builder, moderator, fixture)).toBe(1);
  login = (await User.findByPk(builder.userId))!.login;
}, 300_000);

afterAll(async () => {
  await browser?.dispose();
  await site?.close();
  if (work) fs.rmSync(work, { recursive: true, force: true });
});

describe('searching the published stories', () => {
  it('finds the story by “end float” from the home page and marks the words in its snippet', async () => {
    await browser.clearCookies();
    const page = await browser.newPage();
    page.setDefaultTimeout(15_000);
    try {
      await page.goto(`${site.url}/`);
      await page.getByLabel('Words, figures or serials').fill('end float');
      await page.getByLabel('Builder').fill(login);
      await page.getByRole('button', { name: 'Search' }).click();
      await page.waitForURL((url) => url.searchParams.get('q') === 'end float');

      const card = page.locator(`[data-story-card="${fixture.story.id}"]`);
      await card.getByRole('link', { name: `${TITLE}: end float` }).waitFor();
      await page.getByText('Best match first.').waitFor();
      const snippet = card.locator('[data-search-snippet]');
      const marks = (await snippet.locator('mark').allInnerTexts()).map((m) => m.toLowerCase());
      expect(marks).toContain('end float');
      expect(marks.every((m) => /^(end|float|end float)$/.test(m)), marks.join(' | ')).toBe(true);
      const text = await snippet.innerText();
      expect(text).toMatch(/end float/i);
      // The marks became elements; none of the characters that carry them is left in the text.
      expect(text).not.toContain(SNIPPET_MARK_START);
      expect(text).not.toContain(SNIPPET_MARK_END);
    } finally {
      await page.close();
    }
  });
});
