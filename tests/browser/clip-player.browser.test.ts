import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import AxeBuilder from '@axe-core/playwright';
import type { Page } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { launchBrowser } from '../../scripts/lib/chromium';
import { Clip, Moment } from '../../server/features/clips/clip.model';
import { startBrowserApp } from '../support/browser-app';
import { decodeGray, ffmpegDirect, makeTestClip, meanAbsDiff } from '../support/clips';
import { makeReviewFixture, type ReviewFixture } from '../support/review-fixtures';
import { csrfToken, signIn } from '../support/test-app';

/*
 * The builder's clip player in the workspace: one set of controls (ours), a picture that takes
 * focus without playing, marking that never starts playback, single-key shortcuts that can be
 * turned off or moved to other keys, a poster that is the first frame, new uploads opening by
 * themselves, and a workspace that fits a laptop and a phone without sideways scrolling.
 */

let site: Awaited<ReturnType<typeof startBrowserApp>>;
let browser: Awaited<ReturnType<typeof launchBrowser>>;
let work: string;
let clipFile: string;
let fixture: ReviewFixture;
const shots = '/tmp/bench-shots';

beforeAll(async () => {
  work = fs.mkdtempSync(path.join(os.tmpdir(), 'benchproof-browser-player-'));
  // testsrc2 with the time burnt in: every frame differs from the next.
  clipFile = await makeTestClip({ seconds: 4, format: 'mp4-h264', dir: work, name: 'feeler-gauge' });
  site = await startBrowserApp({ jobs: true });
  browser = await launchBrowser();
  const agent = await signIn(site, 'demo-builder');
  fixture = await makeReviewFixture({ agent, token: await csrfToken(agent) }, { clipFile, title: 'Invented gear pump at the bench (player test)' });
  fs.mkdirSync(shots, { recursive: true });
}, 240_000);

afterAll(async () => {
  await browser?.dispose();
  await site?.close();
  if (work) fs.rmSync(work, { recursive: true, force: true });
});

const frame = (page: Page) => page.getByRole('group', { name: /^Picture of / });
const video = (page: Page) => page.locator('video');
const paused = (page: Page) => page.evaluate(() => document.querySelector('video')!.paused);
const currentTime = (page: Page) => page.evaluate(() => document.querySelector('video')!.currentTime);
const momentsOfClip = () => Moment.count({ where: { clipId: fixture.clipId } });
const player = (page: Page) => page.locator('section:has([data-player-frame])');
/** The player's words on its shortcuts (what the player region is described by). */
async function hintText(page: Page): Promise<string> {
  const id = await player(page).getAttribute('aria-describedby');
  return (await page.locator(`[id="${id}"]`).textContent()) ?? '';
}

/** Signs in as the fixture's builder and opens the workspace on the fixture's clip, ready to seek. */
async function openWorkspace(page: Page, size = { width: 1280, height: 800 }) {
  await page.setViewportSize(size);
  const target = `/builds/${fixture.buildId}?clip=${fixture.clipId}`;
  await page.goto(`${site.url}/auth/github?login=demo-builder&returnTo=${encodeURIComponent(target)}`);
  await video(page).waitFor();
  await page.waitForFunction(() => (document.querySelector('video')?.readyState ?? 0) >= 1);
}

/** Waits until the database holds `count` moments of the fixture's clip. */
async function untilMoments(count: number, ms = 10_000) {
  const end = Date.now() + ms;
  while ((await momentsOfClip()) !== count) {
    if (Date.now() > end) throw new Error(`expected ${count} moments, found ${await momentsOfClip()}`);
    await new Promise((r) => setTimeout(r, 100));
  }
}

async function withPage(run: (page: Page) => Promise<void>) {
  const page = await browser.newPage();
  page.setDefaultTimeout(15_000);
  try {
    await run(page);
  } finally {
    // The shortcut settings live in this browser profile, which every test shares.
    await page.evaluate(() => window.localStorage.clear()).catch(() => undefined);
    await page.close();
  }
}

describe('the clip player at the bench', () => {
  it('has one set of controls, ours: no native controls, and clicking the picture focuses it without playing', async () => {
    await withPage(async (page) => {
      await openWorkspace(page);
      expect(await video(page).getAttribute('controls')).toBeNull();
      expect(await page.evaluate(() => document.querySelector('video')!.controls)).toBe(false);

      await frame(page).click();
      await page.waitForTimeout(600);
      expect(await paused(page)).toBe(true);
      expect(await currentTime(page)).toBe(0);
      expect(await page.evaluate(() => document.activeElement?.getAttribute('aria-label'))).toMatch(/^Picture of /);
      // The focused picture shows it has focus.
      expect(await frame(page).evaluate((el) => getComputedStyle(el).outlineStyle)).not.toBe('none');
      await expect.poll(() => hintText(page)).toMatch(/Press M to mark/);

      // The keyboard still plays and pauses: Space on the picture, or our Play button.
      await page.keyboard.press(' ');
      await expect.poll(() => paused(page)).toBe(false);
      await page.keyboard.press(' ');
      await expect.poll(() => paused(page)).toBe(true);
      await page.getByRole('button', { name: 'Play', exact: true }).click();
      await expect.poll(() => paused(page)).toBe(false);
      await page.getByRole('button', { name: 'Pause', exact: true }).click();
      await expect.poll(() => paused(page)).toBe(true);
    });
  }, 60_000);

  it('the mark key while paused marks the current time and leaves the video paused', async () => {
    await withPage(async (page) => {
      await openWorkspace(page);
      const before = await momentsOfClip();
      await page.getByRole('button', { name: 'Forward 1 second' }).click();
      await page.getByRole('button', { name: 'Forward one frame (pauses)' }).click();
      const at = await currentTime(page);
      expect(at).toBeGreaterThan(1);

      await frame(page).click();
      await page.keyboard.press('m');
      await untilMoments(before + 1);
      await page.waitForTimeout(500);
      expect(await paused(page)).toBe(true);
      expect(await currentTime(page)).toBeCloseTo(at, 3);
      const newest = await Moment.findOne({ where: { clipId: fixture.clipId }, order: [['id', 'DESC']] });
      expect(Math.abs(newest!.atMs - at * 1000)).toBeLessThanOrEqual(1);
      await page.getByRole('button', { name: new RegExp(`^Go to moment \\d+ at ${formatTenths(newest!.atMs)}$`) }).waitFor();
    });
  }, 60_000);

  it('single-key shortcuts can be turned off and moved to another key, and the hint names the key in use', async () => {
    await withPage(async (page) => {
      await openWorkspace(page);
      const start = await momentsOfClip();

      await page.getByRole('button', { name: 'Keyboard shortcuts…' }).click();
      const dialog = page.getByRole('dialog', { name: 'Keyboard shortcuts in the player' });
      await dialog.waitFor();
      const dialogAxe = await new AxeBuilder({ page }).include('[role=dialog]').withTags(['wcag2a', 'wcag2aa', 'wcag21a', 'wcag21aa']).analyze();
      expect(dialogAxe.violations.filter((v) => v.impact === 'serious' || v.impact === 'critical').map((v) => v.id)).toEqual([]);
      await dialog.getByLabel('Use single-key shortcuts in the player').uncheck();
      await dialog.getByRole('button', { name: 'Save shortcuts' }).click();
      await dialog.waitFor({ state: 'detached' });
      await expect.poll(() => hintText(page)).toMatch(/Single-key shortcuts are off/);
      expect(await page.getByRole('button', { name: 'Mark this moment' }).getAttribute('aria-keyshortcuts')).toBeNull();

      await page.getByRole('button', { name: 'Forward 1 second' }).click();
      await page.getByRole('button', { name: 'Forward 1 second' }).click();
      await frame(page).click();
      await page.keyboard.press('m');
      await page.keyboard.press('r');
      await page.waitForTimeout(1000);
      expect(await momentsOfClip()).toBe(start);
      expect(await page.locator('[data-reading-form]').count()).toBe(0);

      await page.getByRole('button', { name: 'Keyboard shortcuts…' }).click();
      await dialog.getByLabel('Use single-key shortcuts in the player').check();
      await dialog.getByLabel('Mark this moment').fill('K');
      await dialog.getByRole('button', { name: 'Save shortcuts' }).click();
      await dialog.waitFor({ state: 'detached' });
      await expect.poll(() => hintText(page)).toMatch(/Press K to mark the moment/);
      expect(await page.getByRole('button', { name: 'Mark this moment' }).getAttribute('aria-keyshortcuts')).toBe('k');
      expect(await page.getByRole('button', { name: 'Mark this moment' }).textContent()).toContain('K');

      await frame(page).click();
      await page.keyboard.press('m');
      await page.waitForTimeout(800);
      expect(await momentsOfClip()).toBe(start);
      await page.keyboard.press('k');
      await untilMoments(start + 1);
      expect(await paused(page)).toBe(true);

      // Kept in this browser: after a reload the player still answers to K.
      await page.reload();
      await video(page).waitFor();
      await expect.poll(() => hintText(page)).toMatch(/press K to mark the current time/);

      // The same key for both actions is refused in words.
      await page.getByRole('button', { name: 'Keyboard shortcuts…' }).click();
      await dialog.getByLabel('Log a reading').fill('K');
      await dialog.getByRole('button', { name: 'Save shortcuts' }).click();
      await dialog.getByText('The two shortcuts need different keys.').waitFor();
    });
  }, 90_000);

  it('the poster the player shows is the first frame of the clip', async () => {
    await withPage(async (page) => {
      await openWorkspace(page);
      const posterUrl = await video(page).getAttribute('poster');
      expect(posterUrl).toBeTruthy();
      const res = await page.request.get(new URL(posterUrl!, site.url).toString());
      expect(res.status()).toBe(200);
      expect(res.headers()['content-type']).toBe('image/jpeg');
      const poster = path.join(work, 'poster.jpg');
      fs.writeFileSync(poster, await res.body());
      const first = path.join(work, 'first-frame.jpg');
      await ffmpegDirect(['-v', 'error', '-y', '-i', clipFile, '-frames:v', '1', '-q:v', '2', first]);
      const atOne = path.join(work, 'frame-at-1s.jpg');
      await ffmpegDirect(['-v', 'error', '-y', '-i', clipFile, '-ss', '1', '-frames:v', '1', '-q:v', '2', atOne]);
      const mine = (await decodeGray(poster)).pixels;
      expect(meanAbsDiff(mine, (await decodeGray(first)).pixels)).toBeLessThan(3);
      expect(meanAbsDiff(mine, (await decodeGray(atOne)).pixels)).toBeGreaterThan(5);
      // And the readout beside it says where that is.
      await page.getByText('0:00.0', { exact: true }).first().waitFor();
    });
  }, 60_000);

  it('a clip title opens the clip; a new upload is named from its file and opens in the player when it is ready', async () => {
    const upload = await makeTestClip({ seconds: 2, format: 'mp4-h264', dir: work, name: 'dial-indicator-zero' });
    await withPage(async (page) => {
      await openWorkspace(page);
      const heading = player(page).locator('> header h2');
      await expect.poll(() => heading.textContent()).toContain('matrix-clip');

      await page.locator('input[type=file]').setInputFiles([upload]);
      await expect.poll(() => heading.textContent(), { timeout: 90_000 }).toContain('dial-indicator-zero');
      expect(await heading.textContent()).not.toContain('.mp4');
      const row = await Clip.findOne({ where: { buildId: fixture.buildId, originalName: 'dial-indicator-zero.mp4' } });
      expect(row?.title).toBe('dial-indicator-zero');
      expect(new URL(page.url()).searchParams.get('clip')).toBe(String(row!.id));

      await page.getByRole('button', { name: 'matrix-clip (open in the player)' }).click();
      await expect.poll(() => heading.textContent()).toContain('matrix-clip');
      expect(new URL(page.url()).searchParams.get('clip')).toBe(String(fixture.clipId));
    });
  }, 150_000);

  it('the workspace fits a laptop at 1280 px and a phone at 390 px without sideways scrolling, and passes axe', async () => {
    for (const size of [
      { width: 1280, height: 800 },
      { width: 390, height: 844 },
    ]) {
      await withPage(async (page) => {
        await openWorkspace(page, size);
        await page.getByRole('heading', { name: 'Readings', exact: true }).waitFor();
        await page.waitForLoadState('networkidle');
        const widths = await page.evaluate(() => ({ scroll: document.documentElement.scrollWidth, inner: window.innerWidth }));
        expect(widths.scroll, `sideways scroll at ${size.width} px`).toBeLessThanOrEqual(widths.inner);
        // Every panel ends inside the window.
        const overflowing = await page.evaluate(() =>
          [...document.querySelectorAll('main section')]
            .filter((el) => el.getBoundingClientRect().right > window.innerWidth + 0.5)
            .map((el) => el.getAttribute('aria-labelledby') ?? el.className),
        );
        expect(overflowing).toEqual([]);
        // The moment's label box has room to type in.
        const labelBox = await page.getByLabel(/^Label of moment 1 at/).boundingBox();
        expect(labelBox!.width).toBeGreaterThan(size.width < 640 ? 150 : 300);

        if (size.width >= 1024) {
          // The readings table scrolls inside its own box; its key columns are in view without it.
          const frameBox = await page.locator('#readings [data-table-frame]').boundingBox();
          for (const name of [/^Name/, /^Value as entered/, /^Estimate/, /^Review/]) {
            const box = await page.locator('#readings th').filter({ hasText: name }).boundingBox();
            expect(box!.x).toBeGreaterThanOrEqual(frameBox!.x);
            expect(box!.x + box!.width, `${name} in view`).toBeLessThanOrEqual(frameBox!.x + frameBox!.width);
          }
        }

        await page.screenshot({ path: path.join(shots, `workspace-${size.width}.png`), fullPage: true });
        const results = await new AxeBuilder({ page }).withTags(['wcag2a', 'wcag2aa', 'wcag21a', 'wcag21aa']).analyze();
        const bad = results.violations.filter((v) => v.impact === 'serious' || v.impact === 'critical');
        expect(bad.map((v) => `${v.impact} ${v.id}: ${v.help} — ${v.nodes.slice(0, 3).map((n) => n.target.join(' ')).join(' | ')}`)).toEqual([]);

        // With the reading form open beside (or under) the player it still fits.
        await page.getByRole('button', { name: 'Log a reading', exact: true }).click();
        await page.locator('[data-reading-form]').waitFor();
        await page.waitForLoadState('networkidle');
        const withForm = await page.evaluate(() => ({ scroll: document.documentElement.scrollWidth, inner: window.innerWidth }));
        expect(withForm.scroll, `sideways scroll with the form at ${size.width} px`).toBeLessThanOrEqual(withForm.inner);
        await page.screenshot({ path: path.join(shots, `workspace-${size.width}-reading-form.png`), fullPage: true });
      });
    }
  }, 120_000);
});

/** A moment's time as the list shows it: m:ss.s, rounded down to the tenth. */
function formatTenths(atMs: number): string {
  const tenths = Math.floor(atMs / 100);
  return `${Math.floor(tenths / 600)}:${String(Math.floor((tenths % 600) / 10)).padStart(2, '0')}.${tenths % 10}`;
}
