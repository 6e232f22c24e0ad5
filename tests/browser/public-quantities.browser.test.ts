import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import AxeBuilder from '@axe-core/playwright';
import type { Page } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { publicStorySchema } from '@shared/public/public-story.schema';
import { launchBrowser } from '../../scripts/lib/chromium';
import { repoRoot } from '../../scripts/lib/bootstrap';
import { startBrowserApp } from '../support/browser-app';
import { makeTestClip } from '../support/clips';
import { sessionFor, type Session } from '../support/matrix-fixtures';
import { makeReviewFixture, publishThroughReview, quantityKeys, type ReviewFixture } from '../support/review-fixtures';

/*
 * A reader on a published story that cites other quantities than lengths (figures invented,
 * tests/support/review-fixtures.ts `makeQuantityEvidence`): a head bolt torqued to 35 lbf·ft and a
 * static compression ratio (589.0 cc + 60.2 cc + 4.0 cc) / (60.2 cc + 4.0 cc) ≈ 10.17 from cc'd
 * volumes, beside the fixture's end float of 0.0047 in.
 */
let site: Awaited<ReturnType<typeof startBrowserApp>>;
let browser: Awaited<ReturnType<typeof launchBrowser>>;
let work: string;
let owner: Session;
let fixture: ReviewFixture;
const artifacts = path.join(repoRoot, 'tests/artifacts');
const TITLE = 'Invented flat-twin head (reader test, any quantity)';

/** NIST SP 811 (2008) B.8: 1 lbf·ft = 1.3558179483314004 N·m, exactly. */
const N_M_PER_LBF_FT = 0.45359237 * 9.80665 * 0.3048;
/** U to two significant digits, as format-quantity writes it (GUM 7.2.6). */
const twoSignificant = (u: number) => u.toFixed(Math.max(0, 1 - Math.floor(Math.log10(u))));

async function expectAccessible(page: Page, what: string) {
  const results = await new AxeBuilder({ page }).withTags(['wcag2a', 'wcag2aa', 'wcag21a', 'wcag21aa']).analyze();
  const bad = results.violations.filter((v) => v.impact === 'serious' || v.impact === 'critical');
  expect(bad.map((v) => `${v.id}: ${v.help} — ${v.nodes.map((n) => n.target.join(' ')).join(', ')}`), what).toEqual([]);
}

beforeAll(async () => {
  work = fs.mkdtempSync(path.join(os.tmpdir(), 'benchproof-browser-public-quantities-'));
  site = await startBrowserApp({ jobs: true });
  browser = await launchBrowser();
  fs.mkdirSync(artifacts, { recursive: true });
  owner = await sessionFor(site, 'owner');
  const moderator = await sessionFor(site, 'moderator');
  const clipFile = await makeTestClip({ seconds: 3, format: 'mp4-h264', dir: work, name: 'head-reader' });
  fixture = await makeReviewFixture(owner, { clipFile, title: TITLE, quantities: true });
  await publishThroughReview(owner, moderator, fixture);
}, 300_000);

afterAll(async () => {
  await browser?.dispose();
  await site?.close();
  if (work) fs.rmSync(work, { recursive: true, force: true });
});

describe('a reader on a story with a torque and a compression ratio', () => {
  it('sees the torque in lbf·ft and then in N·m, the ratio without a unit with its formula, band picture and recompute, and both on paper', async () => {
    const api = publicStorySchema.parse(await (await fetch(`${site.url}/api/public/stories/${fixture.story.id}`)).json());
    const torqueReading = api.claims.find((c) => c.kind === 'reading' && c.key === quantityKeys.torque)!.readings[0]!;
    const ratio = api.claims.find((c) => c.key === quantityKeys.ratio)!.clearance!;
    const torqueU = twoSignificant(torqueReading.expandedUncertainty!);
    const torqueUMetric = twoSignificant(torqueReading.expandedUncertainty! * N_M_PER_LBF_FT);
    // The ratio as judged: its value at the places the engine wrote it, ± U (the larger side of its interval).
    const ratioShown = `${/^[\d.]+/.exec(ratio.display)![0]} ± ${twoSignificant(ratio.expandedUncertainty!)}`;

    await browser.clearCookies();
    const page = await browser.newPage();
    page.setDefaultTimeout(15_000);
    try {
      await page.goto(`${site.url}/stories/${fixture.story.id}`);
      await page.getByRole('heading', { level: 1, name: `${TITLE}: end float` }).waitFor();
      // The builder's system (inches) until the reader picks: the torque as read, the ratio as judged.
      const index = page.getByRole('navigation', { name: 'Claims in this story' });
      await expect.poll(() => index.innerText()).toContain(`35 lbf·ft ± ${torqueU} lbf·ft`);
      expect(await index.innerText()).toContain(ratioShown);

      // The torque reading's claim.
      await page.locator(`a.claim[data-claim="reading:${quantityKeys.torque}"]`).click();
      const panel = page.locator('#claim-panel');
      await panel.locator(`[data-claim-evidence="reading:${quantityKeys.torque}"]`).waitFor();
      let text = await panel.innerText();
      expect(text).toContain(`35 lbf·ft ± ${torqueU} lbf·ft`);
      expect(text).toContain('(k = 2)');
      expect(text).toContain('As entered: 35 lbf·ft');
      expect(text).toContain('Click torque wrench 20–100 lbf·ft (test)');
      await panel.getByText('Recompute it yourself').click();
      await panel.getByRole('button', { name: 'Run through the calculator' }).click();
      await panel.getByText('Same result as published:').waitFor();
      await page.keyboard.press('Escape');
      await page.waitForURL(`**/stories/${fixture.story.id}`);

      // The compression ratio: a formula over two cc'd volumes, judged against 9.5–10.5.
      await page.locator(`a.claim[data-claim="clearance:${quantityKeys.ratio}"]`).click();
      await panel.locator(`[data-claim-evidence="clearance:${quantityKeys.ratio}"]`).waitFor();
      text = await panel.innerText();
      expect(text).toContain('Result = (swept + chamber + dish) / (chamber + dish), where chamber is chamber volume, dish is dish volume');
      expect(text).toContain(ratioShown);
      expect(text).toContain('Within spec');
      expect(text).toContain('band 9.5–10.5');
      expect(text).toMatch(/60\.2 cc ± 0\.\d+ cc/);
      expect(text).toContain('As entered: 4.0 cc');
      await panel.locator('[data-band-picture]').waitFor();
      const picture = await panel.locator('[data-band-picture]').innerText();
      expect(picture).toContain('Scale: ratio, no unit');
      expect(picture).toMatch(/9\.50?\n10\.50?\n/);
      await expectAccessible(page, 'compression ratio claim open, 1280 px');
      await page.screenshot({ path: path.join(artifacts, 'public-quantities-ratio-1280.png'), fullPage: false });
      // Recompute runs the formula with its constants and names.
      await panel.getByText('Recompute it yourself').click();
      const inputs = await panel.getByLabel('Inputs sent to the calculator').innerText();
      expect(JSON.parse(inputs)).toMatchObject({ formula: '(swept + chamber + dish) / (chamber + dish)', constants: { swept: { value: '589.0', unit: 'cc' } }, resultUnit: '1' });
      await panel.getByRole('button', { name: 'Run through the calculator' }).click();
      await panel.getByText('Same result as published:').waitFor();

      // Metric: the torque in N·m at the places it was read to (35 lbf·ft = 47.45 N·m, NIST SP 811 B.7.2), cc and the ratio unchanged.
      await page.getByText('Metric', { exact: true }).click();
      await expect.poll(() => page.evaluate(() => window.localStorage.getItem('benchproof.units'))).toBe('metric');
      expect(await panel.innerText()).toContain(ratioShown);
      expect(await panel.innerText()).toMatch(/60\.2 cc ± 0\.\d+ cc/);
      await page.keyboard.press('Escape');
      await page.waitForURL(`**/stories/${fixture.story.id}`);
      await expect.poll(() => index.innerText()).toContain(`47 N·m ± ${torqueUMetric} N·m`);
      expect(await index.innerText()).toContain(ratioShown);
      expect(await index.innerText()).toMatch(/0\.1194 mm ± 0\.0020 mm/);
      await page.locator(`a.claim[data-claim="clearance:${quantityKeys.torqueResult}"]`).click();
      await panel.locator(`[data-claim-evidence="clearance:${quantityKeys.torqueResult}"]`).waitFor();
      text = await panel.innerText();
      // The result as judged in lbf·ft, and its limits in N·m: 30–40 lbf·ft = 40.7–54.2 N·m, whole N·m (B.7.2).
      expect(text).toMatch(/4[78](\.\d)? N·m ± [\d.]+ N·m/);
      expect(text).toContain('As judged');
      expect(text).toContain('band 41–54 N·m');
      await panel.locator('[data-band-picture]').waitFor();
      await page.keyboard.press('Escape');
      await page.waitForURL(`**/stories/${fixture.story.id}`);

      // On paper, every claim with its figure.
      await page.emulateMedia({ media: 'print' });
      const notes = page.getByRole('region', { name: 'Evidence for the claims (printed)' });
      const printed = await notes.innerText();
      expect(printed).toContain(`47 N·m ± ${torqueUMetric} N·m`);
      expect(printed).toMatch(new RegExp(`${ratioShown.replace(/[.]/g, '\\.')}, within spec \\(guarded rule, k = [\\d.]+\\)`));
      await page.emulateMedia({ media: 'screen' });
    } finally {
      await page.close();
    }
  }, 150_000);

  it('shows the torque and the ratio on the build page and the verification page', async () => {
    await browser.clearCookies();
    const page = await browser.newPage();
    page.setDefaultTimeout(15_000);
    try {
      await page.goto(`${site.url}/public/builds/${fixture.buildId}`);
      const table = page.locator(`[data-clearance="${quantityKeys.torqueResult}"]`);
      await table.waitFor();
      // This browser remembers the metric pick of the story page: the torque in N·m, then back in lbf·ft.
      expect(await table.innerText()).toMatch(/47\.5 N·m ± [\d.]+ N·m/);
      await page.getByText('Imperial', { exact: true }).click();
      await expect.poll(() => table.innerText()).toMatch(/35\.0 lbf·ft ± [\d.]+ lbf·ft/);
      expect(await page.locator(`[data-clearance="${quantityKeys.ratio}"]`).innerText()).toMatch(/10\.\d+ ± 0\.\d+/);

      await page.goto(`${site.url}/verify/parts/${fixture.partId}?story=${fixture.story.id}&rev=1`);
      await page.getByRole('heading', { name: 'Checked results now' }).waitFor();
      const torque = page.locator(`[data-clearance="${quantityKeys.torqueResult}"]`);
      expect(await torque.innerText()).toContain('Spec band 30–40 lbf·ft');
      expect(await torque.locator(`[data-sheet-reading="${quantityKeys.torque}"]`).innerText()).toContain('35 lbf·ft');
      expect(await page.locator(`[data-clearance="${quantityKeys.ratio}"]`).innerText()).toContain('Spec band 9.5–10.5');
    } finally {
      await page.close();
    }
  }, 60_000);
});
