import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { launchBrowser } from '../../scripts/lib/chromium';
import { repoRoot } from '../../scripts/lib/bootstrap';
import { Clip, Moment } from '../../server/features/clips/clip.model';
import { startBrowserApp } from '../support/browser-app';
import { makeDisguisedFile, makeTestClip } from '../support/clips';

let site: Awaited<ReturnType<typeof startBrowserApp>>;
let browser: Awaited<ReturnType<typeof launchBrowser>>;
let work: string;
const artifacts = path.join(repoRoot, 'tests/artifacts');

beforeAll(async () => {
  work = fs.mkdtempSync(path.join(os.tmpdir(), 'benchproof-browser-clips-'));
  site = await startBrowserApp({ jobs: true });
  browser = await launchBrowser();
  fs.mkdirSync(artifacts, { recursive: true });
}, 240_000);
afterAll(async () => {
  await browser?.dispose();
  await site?.close();
  fs.rmSync(work, { recursive: true, force: true });
});

describe('a builder at the bench', () => {
  it('creates a build, uploads clips (a disguised file is refused), waits for ready, steps frames and marks two moments', async () => {
    const clip = await makeTestClip({ seconds: 5, format: 'mkv-mpeg4', dir: work, name: 'pump-body' });
    const fake = await makeDisguisedFile('html', work, 'not-a-clip.mp4');
    await browser.clearCookies();
    const page = await browser.newPage();
    page.setDefaultTimeout(15_000);
    try {
      await page.goto(`${site.url}/auth/github?login=demo-builder&returnTo=%2Fbuilds%2Fnew`);
      await page.getByRole('heading', { name: 'New build' }).waitFor();
      await page.getByLabel('Title').fill('Bench check, pump body (test)');
      await page.getByLabel('What is being built').fill('An invented test pump');
      await page.getByRole('button', { name: 'Add a part' }).click();
      await page.getByLabel('Part 1', { exact: true }).fill('Oil pump');
      await page.getByLabel('Serial of part 1').fill('TP-0001');
      await page.getByRole('button', { name: 'Create build' }).click();
      await page.getByRole('heading', { name: 'Bench check, pump body (test)' }).waitFor();

      await page.locator('input[type=file]').setInputFiles([clip, fake]);
      await page.getByText(/Not uploaded:/).waitFor({ timeout: 60_000 });
      await page.locator('ol[aria-label="Clips in timeline order"] >> text=Ready').first().waitFor({ timeout: 90_000 });

      await page.locator('video').waitFor();
      await page.waitForFunction(() => (document.querySelector('video')?.readyState ?? 0) >= 1);
      await page.getByRole('button', { name: 'Forward 1 second' }).click();
      await page.getByRole('button', { name: 'Forward one frame (pauses)' }).click();
      const t1 = await page.evaluate(() => document.querySelector('video')!.currentTime);
      expect(t1).toBeGreaterThan(1);
      await page.getByLabel('Label for the moment').fill('blade enters');
      await page.getByRole('button', { name: 'Mark this moment' }).click();
      await page.getByRole('list', { name: /Moments in/ }).waitFor();
      await page.getByRole('button', { name: 'Forward 1 second' }).click();
      await page.getByRole('button', { name: 'Forward 1 second' }).focus();
      await page.keyboard.press('m');
      await page.waitForFunction(() => document.querySelectorAll('[aria-label^="Moments in"] > li').length === 2);

      const row = await Clip.findOne({ where: { originalName: 'pump-body.mkv' }, order: [['id', 'DESC']] });
      expect(row?.webCopy).toBe('transcode');
      const moments = await Moment.findAll({ where: { clipId: row!.id }, order: [['atMs', 'ASC']] });
      expect(moments.map((m) => m.label)).toContain('blade enters');
      // The first moment is where the player stood, to the millisecond.
      expect(Math.abs(moments[0]!.atMs - t1 * 1000)).toBeLessThanOrEqual(1);
      expect(moments[1]!.atMs - moments[0]!.atMs).toBeGreaterThan(900);
      await page.screenshot({ path: path.join(artifacts, 'build-workspace.png'), fullPage: true });
    } finally {
      await page.close();
    }
  }, 180_000);
});
