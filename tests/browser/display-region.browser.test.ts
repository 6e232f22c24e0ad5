import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { launchBrowser } from '../../scripts/lib/chromium';
import { DisplayRegionRow } from '../../server/features/speech/speech.model';
import { startBrowserApp } from '../support/browser-app';
import { DISPLAY_BOX, makeDisplayClip } from '../support/display-clip';
import { newBuild, uploadClipInWorkspace } from '../support/page-api';

/*
 * Marking a display in the builder's workspace: on a clip whose picture shows a seven-segment
 * display (drawn by ffmpeg, invented figures), the builder drags a box over the display in the
 * player, saves it in inches, and the figures read off it are listed with what was heard; one is
 * accepted into the reading form. Screenshots go to /tmp/display-region-*.png.
 */

let site: Awaited<ReturnType<typeof startBrowserApp>>;
let browser: Awaited<ReturnType<typeof launchBrowser>>;
let work: string;
let buildId: number;
let clipId: number;

beforeAll(async () => {
  work = fs.mkdtempSync(path.join(os.tmpdir(), 'benchproof-browser-display-'));
  const file = await makeDisplayClip({
    dir: work,
    seconds: 8,
    name: 'journal-on-a-display',
    shown: [
      { fromS: 1, toS: 3.5, text: '2.4996' },
      { fromS: 5, toS: 7.5, text: '2.4991' },
    ],
  });
  site = await startBrowserApp({ jobs: true });
  browser = await launchBrowser();
  const page = await browser.newPage();
  try {
    await page.goto(`${site.url}/auth/github?login=demo-builder&returnTo=%2Fbuilds`);
    await page.locator('main').first().waitFor();
    buildId = await newBuild(page, {
      title: 'Invented crank, journals read off a display (display test)',
      subject: 'An invented engine for this test',
      parts: [{ name: 'Crank', serial: 'TDB-0402' }],
    });
    clipId = await uploadClipInWorkspace(page, site.url, buildId, file);
  } finally {
    await page.close();
  }
}, 240_000);

afterAll(async () => {
  await browser?.dispose();
  await site?.close();
  if (work) fs.rmSync(work, { recursive: true, force: true });
});

describe('marking a display in the workspace', () => {
  it('a box dragged over the display is read, its figures listed, and one accepted into the reading form', async () => {
    const page = await browser.newPage();
    page.setDefaultTimeout(20_000);
    try {
      await page.setViewportSize({ width: 1280, height: 900 });
      const target = `/builds/${buildId}?clip=${clipId}`;
      await page.goto(`${site.url}/auth/github?login=demo-builder&returnTo=${encodeURIComponent(target)}`);
      await page.locator('video').waitFor();
      await page.getByRole('button', { name: 'Mark a display' }).click();
      const controls = page.locator('form[data-display-controls]');
      await controls.waitFor();

      // Drag from 10 px outside the display's top left to 10 px outside its bottom right (640×360 frame).
      const layer = page.locator('[data-display-layer]');
      await page.locator('video').scrollIntoViewIfNeeded();
      const box = (await layer.boundingBox())!;
      const scale = Math.min(box.width / 640, box.height / 360);
      const left = box.x + (box.width - 640 * scale) / 2;
      const top = box.y + (box.height - 360 * scale) / 2;
      const at = (x: number, y: number) => [left + x * scale, top + y * scale] as const;
      await page.mouse.move(...at(DISPLAY_BOX.x - 10, DISPLAY_BOX.y - 10));
      await page.mouse.down();
      await page.mouse.move(...at(DISPLAY_BOX.x + 120, DISPLAY_BOX.y + 60), { steps: 4 });
      await page.mouse.move(...at(DISPLAY_BOX.x + DISPLAY_BOX.w + 10, DISPLAY_BOX.y + DISPLAY_BOX.h + 10), { steps: 4 });
      await page.mouse.up();
      // The typed figures follow the drag: left ≈ 350 / 640 = 54.7 %.
      await expect.poll(async () => Number(await controls.getByLabel('Left %').inputValue())).toBeCloseTo(54.7, 0);
      await controls.getByLabel('Digits are in').selectOption('in');
      await page.screenshot({ path: '/tmp/display-region-marking-1280.png' });
      const [saved] = await Promise.all([
        page.waitForResponse((r) => r.url().endsWith(`/api/clips/${clipId}/display-region`) && r.request().method() === 'PUT'),
        controls.getByRole('button', { name: 'Read this display' }).click(),
      ]);
      expect(saved.status(), saved.status() === 204 ? '' : await saved.text()).toBe(204);
      await controls.waitFor({ state: 'detached' });

      const stored = await DisplayRegionRow.findByPk(clipId);
      expect(stored?.unit).toBe('in');
      expect(stored!.x).toBeCloseTo(350 / 640, 1);
      expect(stored!.width).toBeCloseTo(270 / 640, 1);

      // The figures read off the display are listed (the list asks again while reading runs).
      const heard = page.locator('[data-heard]');
      await heard.getByRole('heading', { name: /read off its display/ }).waitFor();
      await heard.getByText('2.4996 in', { exact: true }).waitFor({ timeout: 60_000 });
      await heard.getByText('2.4991 in', { exact: true }).waitFor();
      expect(await heard.locator('[data-heard-source="display"]').count()).toBe(2);
      await page.locator('[data-display-outline]').waitFor();
      await page.screenshot({ path: '/tmp/display-region-read-1280.png', fullPage: true });

      await heard.locator('li', { hasText: '2.4996 in' }).getByRole('button', { name: /^Accept/ }).click();
      const form = page.locator('[data-reading-form]');
      await form.waitFor();
      await expect.poll(() => form.getByLabel('Value as shown').inputValue()).toBe('2.4996 in');
      await form.screenshot({ path: '/tmp/display-region-form-1280.png' });
    } finally {
      await page.close();
    }
  }, 150_000);
});
