import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import AxeBuilder from '@axe-core/playwright';
import type { Page } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { launchBrowser } from '../../scripts/lib/chromium';
import { Moment } from '../../server/features/clips/clip.model';
import { Reading } from '../../server/features/readings/reading.model';
import { ProposalDismissal } from '../../server/features/speech/speech.model';
import { startBrowserApp } from '../support/browser-app';
import { makeNarratedClip } from '../support/narration';
import { api, newBuild, uploadClipInWorkspace } from '../support/page-api';

/*
 * "Heard on this clip" in the builder's workspace: a clip narrated by festival (one figure, then
 * another), heard by pocketsphinx; the builder accepts the first with A (the reading form opens
 * filled in, nothing stored until it is saved), saves it and sees it logged; dismisses the other
 * with D and brings it back with U; the keys follow the player's shortcut settings (off, or
 * moved). Screenshots go to /tmp/proposals-*.png.
 *
 * "five hundred sixty four and two tenths" is 564.2 thou = 0.5642 in (thou and tenths as the
 * trade says them, common practice, no published source; 1 in = 1000 thou, NIST SP 811 B.8).
 */

const PHRASE_AT = { opening: 1, thou: 3, mm: 7 } as const;
const CLIP_SECONDS = 10;

let site: Awaited<ReturnType<typeof startBrowserApp>>;
let browser: Awaited<ReturnType<typeof launchBrowser>>;
let work: string;
let clipFile: string;
let buildId: number;
let clipId: number;
let micrometerId: number;
interface Heard {
  id: string;
  kind: string;
  value?: string;
  unit: string;
  atMs: number;
}
let thou: Heard;
let mm: Heard;

const today = () => {
  const d = new Date();
  return `${d.getFullYear()}-${String(d.getMonth() + 1).padStart(2, '0')}-${String(d.getDate()).padStart(2, '0')}`;
};

async function dismissToasts(page: Page) {
  const close = page.getByRole('button', { name: 'Dismiss notification' });
  while ((await close.count()) > 0) await close.first().click();
}

/** axe-core on the page; serious and critical violations fail, the rest are printed. */
async function axeProblems(page: Page, what: string): Promise<string[]> {
  const results = await new AxeBuilder({ page }).withTags(['wcag2a', 'wcag2aa', 'wcag21a', 'wcag21aa']).analyze();
  const bad = results.violations.filter((v) => v.impact === 'serious' || v.impact === 'critical');
  for (const v of results.violations.filter((x) => !bad.includes(x))) console.log(`[axe ${v.impact}] ${what}: ${v.id} — ${v.help} (${v.nodes.length})`);
  return bad.map((v) => `${v.impact} ${v.id}: ${v.help} — ${v.nodes.slice(0, 3).map((n) => n.target.join(' ')).join(' | ')}`);
}

const heardPanel = (page: Page) => page.locator('[data-heard]');
const heardList = (page: Page) => page.locator('[data-heard-list]');
const row = (page: Page, p: Heard) => page.locator(`[data-proposal="${p.id}"]`);
const selectedRow = (page: Page) => page.locator('[data-heard-list] li[data-selected]');
const currentTime = (page: Page) => page.evaluate(() => document.querySelector('video')!.currentTime);
const dismissed = (p: Heard) => ProposalDismissal.count({ where: { clipId, proposalId: p.id } });

/** Signs in (once per page) and opens the workspace on the narrated clip, with what was heard listed. */
async function openWorkspace(page: Page, size = { width: 1280, height: 900 }) {
  await page.setViewportSize(size);
  const target = `/builds/${buildId}?clip=${clipId}`;
  await page.goto(`${site.url}/auth/github?login=demo-builder&returnTo=${encodeURIComponent(target)}`);
  await page.locator('video').waitFor();
  await page.waitForFunction(() => (document.querySelector('video')?.readyState ?? 0) >= 1);
  await heardPanel(page).getByText('564.2 thou', { exact: true }).waitFor();
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

/** Presses keys on the list itself (focused as a keyboard user would, by Tab order or a click on its edge). */
async function focusList(page: Page) {
  await heardList(page).focus();
  await expect.poll(() => page.evaluate(() => document.activeElement?.hasAttribute('data-heard-list') ?? false)).toBe(true);
}

async function selectInList(page: Page, p: Heard) {
  await focusList(page);
  for (let i = 0; i < 10 && (await selectedRow(page).getAttribute('data-proposal')) !== p.id; i += 1) await page.keyboard.press('ArrowDown');
  await expect.poll(() => selectedRow(page).getAttribute('data-proposal')).toBe(p.id);
}

beforeAll(async () => {
  work = fs.mkdtempSync(path.join(os.tmpdir(), 'benchproof-browser-proposals-'));
  clipFile = await makeNarratedClip({
    dir: work,
    seconds: CLIP_SECONDS,
    name: 'bore-depth-read-aloud',
    phrases: [
      { atS: PHRASE_AT.opening, text: 'the depth reads' },
      { atS: PHRASE_AT.thou, text: 'five hundred sixty four and two tenths' },
      { atS: PHRASE_AT.mm, text: 'twelve point five millimeters' },
    ],
  });
  site = await startBrowserApp({ jobs: true });
  browser = await launchBrowser();

  // Fixtures through the API from a signed-in page (invented; the test database has no demo seed).
  const page = await browser.newPage();
  try {
    await page.goto(`${site.url}/auth/github?login=demo-builder&returnTo=%2Fbuilds`);
    await page.locator('main').first().waitFor();
    buildId = await newBuild(page, {
      title: 'Invented short block, bore depth read aloud (proposals test)',
      subject: 'An invented engine for this test',
      parts: [{ name: 'Block', serial: 'TPB-0901' }],
    });
    const mic = await api<{ instrument: { id: number } }>(page, 'POST', '/api/instruments', {
      name: 'Proposals browser test depth micrometer 0–1 in',
      kind: 'depth-micrometer',
      serial: 'PB-01',
      unit: 'in',
      resolution: '0.0001',
      lastCalibratedOn: today(),
      calibrationIntervalDays: 365,
      calibratedBy: 'invented test lab',
    });
    expect(mic.status, JSON.stringify(mic.json)).toBe(201);
    micrometerId = mic.json.instrument.id;

    clipId = await uploadClipInWorkspace(page, site.url, buildId, clipFile);

    // Listening runs in the worker after processing; asking for the proposals queues it if need be.
    const end = Date.now() + 120_000;
    let items: Heard[] = [];
    for (;;) {
      const res = await api<{ state: string; suggestions: Heard[] }>(page, 'GET', `/api/clips/${clipId}/suggestions`);
      if (!['queued', 'running'].includes(res.json.state)) {
        expect(res.json.state, 'pocketsphinx must be installed: npm test installs it').toBe('done');
        items = res.json.suggestions;
        break;
      }
      if (Date.now() > end) throw new Error(`listening to clip ${clipId} is still ${res.json.state}`);
      await page.waitForTimeout(500);
    }
    thou = items.find((p) => p.kind === 'direct' && p.unit === 'thou' && p.value === '564.2')!;
    mm = items.find((p) => p.kind === 'direct' && p.unit === 'mm' && p.value === '12.5')!;
    expect({ thou, mm }, JSON.stringify(items)).toEqual({ thou: expect.anything(), mm: expect.anything() });
  } finally {
    await page.close();
  }
}, 300_000);

afterAll(async () => {
  await browser?.dispose();
  await site?.close();
  if (work) fs.rmSync(work, { recursive: true, force: true });
});

describe('heard on this clip, in the builder’s workspace', () => {
  it('lists the figures heard in time order, clearly worded, and a time moves the player there', async () => {
    await withPage(async (page) => {
      await openWorkspace(page);
      const panel = heardPanel(page);
      await panel.getByRole('heading', { name: /^Heard on this clip/ }).waitFor();
      const figures = await panel.locator('[data-heard-figure]').allTextContents();
      expect(figures.indexOf('564.2 thou')).toBeGreaterThanOrEqual(0);
      expect(figures.indexOf('564.2 thou')).toBeLessThan(figures.indexOf('12.5 mm'));
      // The words heard, and how clearly, in words.
      await row(page, thou).getByText('“five hundred sixty four and two tenths”', { exact: false }).waitFor();
      expect(await row(page, thou).locator('[data-heard-confidence]').innerText()).toMatch(/^(clear|unsure)$/);
      // Why the figure is more than the literal words.
      await row(page, thou).getByText('read as thou and tenths', { exact: false }).waitFor();

      await row(page, mm).getByRole('button', { name: /^Go to \d:\d\d\.\d in the player$/ }).click();
      await expect.poll(() => currentTime(page)).toBeCloseTo(mm.atMs / 1000, 1);
      expect(await page.evaluate(() => document.querySelector('video')!.paused)).toBe(true);

      await dismissToasts(page);
      await page.screenshot({ path: '/tmp/proposals-1280.png', fullPage: true });
      await panel.screenshot({ path: '/tmp/proposals-panel-1280.png' });
      expect(await axeProblems(page, 'workspace with the heard list, 1280')).toEqual([]);
    });
  }, 90_000);

  it('A accepts: the form opens filled in at the proposal’s time, nothing is stored until it is saved, then it shows as logged', async () => {
    await withPage(async (page) => {
      await openWorkspace(page);
      const momentsBefore = await Moment.count({ where: { clipId } });
      await selectInList(page, thou);
      await page.keyboard.press('a');

      const form = page.locator('[data-reading-form]');
      await form.waitFor();
      await form.locator('[data-heard-filled]').getByText('five hundred sixty four and two tenths', { exact: false }).waitFor();
      await expect.poll(() => form.getByLabel('Value as shown').inputValue()).toBe('564.2 thou');
      expect(await form.getByRole('radio', { name: /^One indication/ }).isChecked()).toBe(true);
      await expect.poll(() => form.getByLabel(/^Moment at/).inputValue()).toBe((thou.atMs / 1000).toFixed(3));
      // The player is at that time, and nothing was stored on opening: no moment yet.
      await expect.poll(() => currentTime(page)).toBeCloseTo(thou.atMs / 1000, 1);
      await page.waitForTimeout(500);
      expect(await Moment.count({ where: { clipId } })).toBe(momentsBefore);
      await form.getByText('marked when you save the reading', { exact: false }).waitFor();

      await form.getByLabel('Instrument').selectOption(String(micrometerId));
      await form.getByLabel('Name').fill('Bore depth as supplied');
      await form.getByText('reads as 564.2 thou', { exact: false }).waitFor();
      await dismissToasts(page);
      await form.screenshot({ path: '/tmp/proposals-form-1280.png' });
      await form.getByRole('button', { name: 'Save reading' }).click();
      await form.waitFor({ state: 'detached' });

      // Stored now: one moment at the proposal's time, one reading of 564.2 thou on it.
      const moment = await Moment.findOne({ where: { clipId, atMs: thou.atMs } });
      expect(moment).not.toBeNull();
      expect(await Moment.count({ where: { clipId } })).toBe(momentsBefore + 1);
      const reading = await Reading.findOne({ where: { buildId, momentId: moment!.id } });
      expect(reading).toMatchObject({ key: 'bore-depth-as-supplied', kind: 'direct', instrumentId: micrometerId });
      expect(reading!.entered).toMatchObject({ value: '564.2 thou' });

      await row(page, thou).locator('[data-heard-logged]').getByText('bore-depth-as-supplied').waitFor();
      expect(await row(page, thou).locator('[data-heard-logged]').textContent()).toBe('Logged as bore-depth-as-supplied');
    });
  }, 90_000);

  it('D dismisses (hidden behind “Show dismissed”), U brings it back', async () => {
    await withPage(async (page) => {
      await openWorkspace(page);
      await selectInList(page, mm);
      await page.keyboard.press('d');
      await row(page, mm).waitFor({ state: 'detached' });
      await expect.poll(() => dismissed(mm)).toBe(1);
      const show = heardPanel(page).getByRole('button', { name: 'Show dismissed (1)' });
      await show.waitFor();
      // The list keeps focus, so U works at once.
      expect(await page.evaluate(() => document.activeElement?.hasAttribute('data-heard-list') ?? false)).toBe(true);

      await show.click();
      await row(page, mm).getByText('Dismissed', { exact: true }).waitFor();
      await dismissToasts(page);
      await heardPanel(page).screenshot({ path: '/tmp/proposals-dismissed-1280.png' });
      await heardPanel(page).getByRole('button', { name: 'Hide dismissed (1)' }).click();
      await row(page, mm).waitFor({ state: 'detached' });

      await focusList(page);
      await page.keyboard.press('u');
      await row(page, mm).waitFor();
      await expect.poll(() => dismissed(mm)).toBe(0);
      await expect.poll(() => heardPanel(page).getByRole('button', { name: /^Show dismissed/ }).count()).toBe(0);
      expect(await row(page, mm).textContent()).not.toContain('Dismissed');
    });
  }, 90_000);

  it('follows the player’s shortcut settings: off, only Enter and Delete act; moved, the new key acts', async () => {
    await withPage(async (page) => {
      await openWorkspace(page);
      const dialog = page.getByRole('dialog', { name: 'Keyboard shortcuts in the player' });

      // Off (WCAG 2.1.4): the letters do nothing, Delete still dismisses.
      await page.getByRole('button', { name: 'Keyboard shortcuts…' }).click();
      await dialog.getByLabel('Use single-key shortcuts in the player').uncheck();
      await dialog.getByRole('button', { name: 'Save shortcuts' }).click();
      await dialog.waitFor({ state: 'detached' });
      await heardPanel(page).getByText('Single-key shortcuts are off', { exact: false }).waitFor();
      await selectInList(page, mm);
      await page.keyboard.press('d');
      await page.keyboard.press('a');
      await page.waitForTimeout(700);
      expect(await dismissed(mm)).toBe(0);
      expect(await page.locator('[data-reading-form]').count()).toBe(0);
      await page.keyboard.press('Delete');
      await expect.poll(() => dismissed(mm)).toBe(1);
      await heardPanel(page).getByRole('button', { name: 'Show dismissed (1)' }).click();
      await row(page, mm).getByRole('button', { name: /^Bring back / }).click();
      await expect.poll(() => dismissed(mm)).toBe(0);

      // On again, with Dismiss moved to X: D no longer dismisses, X does, and the hint says so.
      await page.getByRole('button', { name: 'Keyboard shortcuts…' }).click();
      await dialog.getByLabel('Use single-key shortcuts in the player').check();
      await dialog.getByLabel('Dismiss', { exact: true }).fill('X');
      await dialog.getByRole('button', { name: 'Save shortcuts' }).click();
      await dialog.waitFor({ state: 'detached' });
      await heardPanel(page).getByText('X or Delete dismisses', { exact: false }).waitFor();
      expect(await row(page, mm).getByRole('button', { name: /^Dismiss / }).getAttribute('aria-keyshortcuts')).toBe('x');
      await selectInList(page, mm);
      await page.keyboard.press('d');
      await page.waitForTimeout(700);
      expect(await dismissed(mm)).toBe(0);
      await page.keyboard.press('x');
      await expect.poll(() => dismissed(mm)).toBe(1);
      await page.keyboard.press('u');
      await expect.poll(() => dismissed(mm)).toBe(0);

      // A key already the player's is refused in words.
      await page.getByRole('button', { name: 'Keyboard shortcuts…' }).click();
      await dialog.getByLabel('Accept', { exact: true }).fill('M');
      await dialog.getByRole('button', { name: 'Save shortcuts' }).click();
      await dialog.getByText('The two shortcuts need different keys.').waitFor();
    });
  }, 90_000);

  it('fits a phone at 390 px without sideways scrolling', async () => {
    await withPage(async (page) => {
      await openWorkspace(page, { width: 390, height: 844 });
      await page.getByRole('heading', { name: 'Readings', exact: true }).waitFor();
      await page.waitForLoadState('networkidle');
      const widths = await page.evaluate(() => ({ scroll: document.documentElement.scrollWidth, inner: window.innerWidth }));
      expect(widths.scroll, 'sideways scroll at 390 px').toBeLessThanOrEqual(widths.inner);
      const panelBox = await heardPanel(page).boundingBox();
      expect(panelBox!.x + panelBox!.width).toBeLessThanOrEqual(390);
      await dismissToasts(page);
      await page.screenshot({ path: '/tmp/proposals-390.png', fullPage: true });
      await heardPanel(page).screenshot({ path: '/tmp/proposals-panel-390.png' });
      expect(await axeProblems(page, 'workspace with the heard list, 390')).toEqual([]);
    });
  }, 90_000);
});
