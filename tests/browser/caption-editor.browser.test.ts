import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import AxeBuilder from '@axe-core/playwright';
import type { Page } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { launchBrowser } from '../../scripts/lib/chromium';
import { CaptionCorrection } from '../../server/features/speech/corrections.model';
import { storeClipWords } from '../../server/features/speech/speech.service';
import { startBrowserApp } from '../support/browser-app';
import { makeTestClip } from '../support/clips';
import { api, newBuild, uploadClipInWorkspace } from '../support/page-api';

/*
 * "Captions" in the builder's workspace: the clip's caption lines, one edited in place (Escape
 * cancels, Enter saves), marked corrected, the player's captions track loaded again with the
 * corrected words and the suggested reading they make listed; then the correction undone. The
 * words are stored directly, as a recognizer run would leave them ("three now" misheard for
 * "three thou"). Screenshots go to /tmp/caption-editor-*.png.
 */

const HEARD = [
  { word: 'feeler', startMs: 200, endMs: 600, confidence: 0.9 },
  { word: 'three', startMs: 1000, endMs: 1300, confidence: 0.9 },
  { word: 'now', startMs: 1350, endMs: 1600, confidence: 0.6 },
  { word: 'slides', startMs: 2500, endMs: 2900, confidence: 0.9 },
];

let site: Awaited<ReturnType<typeof startBrowserApp>>;
let browser: Awaited<ReturnType<typeof launchBrowser>>;
let work: string;
let buildId: number;
let clipId: number;

/** axe-core on the page; serious and critical violations fail, the rest are printed. */
async function axeProblems(page: Page, what: string): Promise<string[]> {
  const results = await new AxeBuilder({ page }).withTags(['wcag2a', 'wcag2aa', 'wcag21a', 'wcag21aa']).analyze();
  const bad = results.violations.filter((v) => v.impact === 'serious' || v.impact === 'critical');
  for (const v of results.violations.filter((x) => !bad.includes(x))) console.log(`[axe ${v.impact}] ${what}: ${v.id} — ${v.help} (${v.nodes.length})`);
  return bad.map((v) => `${v.impact} ${v.id}: ${v.help} — ${v.nodes.slice(0, 3).map((n) => n.target.join(' ')).join(' | ')}`);
}

const panel = (page: Page) => page.locator('[data-captions]');
const lines = (page: Page) => panel(page).locator('[data-caption-line]');
const lineTexts = (page: Page) => panel(page).locator('[data-caption-text]').allTextContents();
/** The cues the player's captions track holds now (the track is set to hidden, so it loads without showing). */
const trackCues = (page: Page) =>
  page.evaluate(() => {
    const track = [...document.querySelector('video')!.textTracks].find((t) => t.kind === 'captions')!;
    return [...(track.cues ?? [])].map((c) => (c as VTTCue).text);
  });

beforeAll(async () => {
  work = fs.mkdtempSync(path.join(os.tmpdir(), 'benchproof-browser-captions-'));
  const clipFile = await makeTestClip({ format: 'mp4-h264', dir: work, seconds: 4, audio: false, name: 'feeler-gap-captions' });
  site = await startBrowserApp({ jobs: true });
  browser = await launchBrowser();
  const page = await browser.newPage();
  try {
    await page.goto(`${site.url}/auth/github?login=demo-builder&returnTo=%2Fbuilds`);
    await page.locator('main').first().waitFor();
    buildId = await newBuild(page, {
      title: 'Invented short block, feeler gap captions (caption editor test)',
      subject: 'An invented engine for this test',
      parts: [{ name: 'Block', serial: 'TCE-0001' }],
    });
    clipId = await uploadClipInWorkspace(page, site.url, buildId, clipFile);
    const end = Date.now() + 120_000;
    for (;;) {
      const res = await api<{ state: string }>(page, 'GET', `/api/clips/${clipId}/transcript`);
      if (!['queued', 'running'].includes(res.json.state)) break;
      if (Date.now() > end) throw new Error(`listening to clip ${clipId} is still ${res.json.state}`);
      await page.waitForTimeout(500);
    }
    await storeClipWords(clipId, HEARD);
  } finally {
    await page.close();
  }
}, 300_000);

afterAll(async () => {
  await browser?.dispose();
  await site?.close();
  if (work) fs.rmSync(work, { recursive: true, force: true });
});

describe('captions, in the builder’s workspace', () => {
  it('a line is edited in place, marked corrected, reaches the player’s captions and the suggestions, and is undone', async () => {
    const page = await browser.newPage();
    page.setDefaultTimeout(15_000);
    try {
      await page.setViewportSize({ width: 1280, height: 900 });
      const target = `/builds/${buildId}?clip=${clipId}`;
      await page.goto(`${site.url}/auth/github?login=demo-builder&returnTo=${encodeURIComponent(target)}`);
      await page.locator('video').waitFor();
      await page.waitForFunction(() => (document.querySelector('video')?.readyState ?? 0) >= 1);
      await page.evaluate(() => {
        const track = [...document.querySelector('video')!.textTracks].find((t) => t.kind === 'captions')!;
        track.mode = 'hidden';
      });
      await expect.poll(() => trackCues(page)).toEqual(['feeler three now', 'slides']);

      // Folded away at first; opened by its heading's button.
      const toggle = panel(page).getByRole('button', { name: /^Captions/ });
      expect(await toggle.getAttribute('aria-expanded')).toBe('false');
      await toggle.click();
      expect(await toggle.getAttribute('aria-expanded')).toBe('true');
      await expect.poll(() => lineTexts(page)).toEqual(['feeler three now', 'slides']);

      // A time moves the player there.
      await lines(page).nth(1).getByRole('button', { name: 'Go to 0:02.5 in the player' }).click();
      await expect.poll(() => page.evaluate(() => document.querySelector('video')!.currentTime)).toBeCloseTo(2.5, 1);

      // Escape cancels: nothing is stored.
      await lines(page).first().getByRole('button', { name: 'Edit the caption at 0:00.2' }).click();
      const field = panel(page).getByRole('textbox', { name: /^Words said from 0:00\.2/ });
      await expect.poll(() => page.evaluate(() => document.activeElement?.hasAttribute('data-caption-field') ?? false)).toBe(true);
      await field.fill('something else');
      await page.keyboard.press('Escape');
      await expect.poll(() => field.count()).toBe(0);
      expect(await CaptionCorrection.count({ where: { clipId } })).toBe(0);
      await expect.poll(() => page.evaluate(() => document.activeElement?.getAttribute('aria-label'))).toBe('Edit the caption at 0:00.2');

      // Enter saves.
      await lines(page).first().getByRole('button', { name: 'Edit the caption at 0:00.2' }).click();
      await field.fill('feeler three thou');
      await page.keyboard.press('Enter');
      await expect.poll(() => lineTexts(page)).toEqual(['feeler three thou', 'slides']);
      await lines(page).first().locator('[data-caption-corrected]').getByText('corrected').waitFor();
      expect(await lines(page).nth(1).locator('[data-caption-corrected]').count()).toBe(0);
      await panel(page).getByRole('button', { name: 'Captions · 1 corrected' }).waitFor();
      const [row] = await CaptionCorrection.findAll({ where: { clipId } });
      expect({ startMs: row?.startMs, endMs: row?.endMs, text: row?.text }).toEqual({ startMs: 200, endMs: 1600, text: 'feeler three thou' });

      // The player's captions load again, and the suggestions list the figure the words now say.
      await expect.poll(() => trackCues(page)).toEqual(['feeler three thou', 'slides']);
      expect(await page.locator('video track[kind=captions]').getAttribute('src')).toMatch(/captions\.vtt\?v=1-\d+$/);
      await page.locator('[data-heard]').locator('[data-heard-figure]').getByText(/^3 thou/).first().waitFor();

      await panel(page).screenshot({ path: '/tmp/caption-editor-panel-1280.png' });
      expect(await axeProblems(page, 'workspace with the captions open, 1280')).toEqual([]);

      // Undone: the words heard come back everywhere.
      await lines(page).first().getByRole('button', { name: 'Undo the correction of the caption at 0:00.2' }).click();
      await expect.poll(() => lineTexts(page)).toEqual(['feeler three now', 'slides']);
      expect(await panel(page).locator('[data-caption-corrected]').count()).toBe(0);
      expect(await CaptionCorrection.count({ where: { clipId } })).toBe(0);
      await expect.poll(() => trackCues(page)).toEqual(['feeler three now', 'slides']);

      // Narrow: the lines and their actions still fit.
      await page.setViewportSize({ width: 360, height: 800 });
      await lines(page).first().getByRole('button', { name: 'Edit the caption at 0:00.2' }).click();
      await panel(page).screenshot({ path: '/tmp/caption-editor-panel-360.png' });
      expect(await axeProblems(page, 'workspace with a caption being edited, 360')).toEqual([]);
    } finally {
      await page.close();
    }
  }, 120_000);
});
