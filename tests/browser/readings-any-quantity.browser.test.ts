import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import type { Locator, Page } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { launchBrowser } from '../../scripts/lib/chromium';
import { startBrowserApp } from '../support/browser-app';
import { makeTestClip } from '../support/clips';
import { api } from '../support/page-api';

/*
 * The builder's workspace forms for quantities other than lengths: a torque wrench and a burette
 * in the register, a pressure gauge's zero, readings in lbf·ft and cc at moments, and a spec in
 * lbf·ft. Screenshots go to /tmp/forms-*.png.
 */

let site: Awaited<ReturnType<typeof startBrowserApp>>;
let browser: Awaited<ReturnType<typeof launchBrowser>>;
let work: string;
const shot = (name: string) => `/tmp/forms-${name}.png`;

beforeAll(async () => {
  work = fs.mkdtempSync(path.join(os.tmpdir(), 'benchproof-browser-any-quantity-'));
  site = await startBrowserApp({ jobs: true });
  browser = await launchBrowser();
}, 240_000);
afterAll(async () => {
  await browser?.dispose();
  await site?.close();
  fs.rmSync(work, { recursive: true, force: true });
});

const today = () => {
  const d = new Date();
  return `${d.getFullYear()}-${String(d.getMonth() + 1).padStart(2, '0')}-${String(d.getDate()).padStart(2, '0')}`;
};

async function dismissToasts(page: Page) {
  const close = page.getByRole('button', { name: 'Dismiss notification' });
  while ((await close.count()) > 0) await close.first().click();
  await page.waitForTimeout(300);
}

const optionValues = (select: Locator) => select.locator('option').evaluateAll((options) => options.map((o) => (o as HTMLOptionElement).value));
const noSideScroll = (page: Page) => page.evaluate(() => document.documentElement.scrollWidth <= window.innerWidth);

/** Adds an instrument through the register's dialog; the unit follows the kind (imperial: no system chosen). */
async function addInstrument(page: Page, fields: { name: string; kind: string; unit: string; units: string[]; resolution: string; symbol: string; stated?: string }) {
  await page.getByRole('button', { name: 'Add an instrument' }).click();
  const dialog = page.getByRole('dialog', { name: 'Add an instrument' });
  await dialog.getByLabel('Name').fill(fields.name);
  await dialog.getByLabel('Kind').selectOption(fields.kind);
  const unit = dialog.getByLabel('Unit', { exact: true });
  await expect.poll(() => unit.inputValue()).toBe(fields.unit);
  expect(await optionValues(unit)).toEqual(fields.units);
  await dialog.getByLabel(`Resolution (${fields.symbol})`).fill(fields.resolution);
  if (fields.stated) await dialog.getByLabel(`Stated uncertainty (${fields.symbol})`).fill(fields.stated);
  await dialog.getByLabel('Last calibrated on').fill(today());
  await dialog.getByLabel('Interval (days)').fill('365');
  await dialog.getByLabel('Calibrated by').fill('Invented test lab');
  return dialog;
}

describe('the workspace forms for every quantity', () => {
  it('register a torque wrench and a burette, log 35 lbf·ft and 64.2 cc at moments, zero a pressure gauge and keep a spec in lbf·ft', async () => {
    const clip = await makeTestClip({ seconds: 4, format: 'mp4-h264', dir: work, name: 'head-bolts' });
    await browser.clearCookies();
    const page = await browser.newPage();
    await page.setViewportSize({ width: 1280, height: 900 });
    page.setDefaultTimeout(15_000);
    const form = page.locator('[data-reading-form]');
    try {
      await page.goto(`${site.url}/auth/github?login=demo-builder&returnTo=%2Finstruments`);
      await page.getByRole('heading', { name: 'Instruments', level: 1 }).waitFor();

      // 1. A torque wrench: the kind narrows the unit picker to torque and starts it in lbf·ft.
      const wrenchName = 'Invented click wrench 20–150 lbf·ft';
      let dialog = await addInstrument(page, {
        name: wrenchName,
        kind: 'torque-wrench',
        unit: 'lbf_ft',
        units: ['N_m', 'lbf_ft', 'lbf_in'],
        resolution: '1',
        symbol: 'lbf·ft',
      });
      // A pressure typed into a torque record is refused beside the box, naming the units it takes.
      await dialog.getByLabel('Resolution (lbf·ft)').fill('1 psi');
      await dialog.getByText('pounds per square inch is not a torque: enter it in N·m, lbf·ft, lbf·in.').waitFor();
      await expect(dialog.getByLabel('Resolution (lbf·ft)').getAttribute('aria-invalid')).resolves.toBe('true');
      // Another torque unit is refused too: the register keeps one unit per instrument.
      await dialog.getByLabel('Resolution (lbf·ft)').fill('12 lbf·in');
      await dialog.getByText("enter it in lbf·ft (this record's unit), or leave the unit off").waitFor();
      await dialog.getByLabel('Resolution (lbf·ft)').fill('1');
      // GUM F.2.2.1: u = 1 lbf·ft / (2√3) = 0.2887 lbf·ft, two significant digits (GUM 7.2.6).
      await expect(dialog.getByTestId('default-uncertainty').textContent()).resolves.toContain('= 0.29 lbf·ft');
      await dialog.getByLabel('Unit', { exact: true }).scrollIntoViewIfNeeded();
      await page.screenshot({ path: shot('add-torque-wrench-1280') });
      // "Other" offers every quantity's units, grouped.
      await dialog.getByLabel('Kind').selectOption('other');
      const groups = await dialog.getByLabel('Unit', { exact: true }).locator('optgroup').evaluateAll((gs) => gs.map((g) => (g as HTMLOptGroupElement).label));
      expect(groups).toEqual(['Length', 'Volume', 'Angle', 'Torque', 'Pressure', 'Temperature', 'Time', 'Mass']);
      await expect.poll(() => dialog.getByLabel('Unit', { exact: true }).inputValue()).toBe('lbf_ft');
      await dialog.getByLabel('Kind').selectOption('torque-wrench');
      await dialog.getByRole('button', { name: 'Add instrument' }).click();
      await dialog.waitFor({ state: 'detached' });

      // 2. A burette in cc, with a stated uncertainty.
      dialog = await addInstrument(page, {
        name: 'Invented burette 100 cc',
        kind: 'burette',
        unit: 'cc',
        units: ['cc', 'ml', 'cu_in'],
        resolution: '0.1',
        symbol: 'cc',
        stated: '0.12',
      });
      await dialog.getByRole('button', { name: 'Add instrument' }).click();
      await dialog.waitFor({ state: 'detached' });

      // 3. A pressure gauge's zero: 0.5 psi shown open to the air is an offset of +0.5 psi.
      const gauge = await api<{ instrument: { id: number } }>(page, 'POST', '/api/instruments', {
        name: 'Invented compression gauge',
        kind: 'pressure-gauge',
        unit: 'psi',
        resolution: '5',
        lastCalibratedOn: today(),
        calibrationIntervalDays: 365,
      });
      expect(gauge.status).toBe(201);
      await page.reload();
      const table = page.getByRole('table', { name: 'Your instruments' });
      const row = (name: string) => table.getByRole('row').filter({ hasText: name });
      await row(wrenchName).getByText('1 lbf·ft', { exact: true }).waitFor();
      await row('Invented burette 100 cc').getByText('0.12 cc', { exact: true }).waitFor();
      await row('Invented compression gauge').getByRole('button', { name: 'Log a zero check for Invented compression gauge' }).click();
      const zero = page.getByRole('dialog', { name: 'Log a zero check' });
      await zero.getByLabel('Setting standard (psi)').fill('0');
      await zero.getByLabel('It showed (psi)').fill('0.5');
      await expect.poll(() => zero.getByTestId('zero-offset').textContent()).toContain('shown − standard = +0.5 psi');
      await zero.getByRole('button', { name: 'Log zero check' }).click();
      await zero.waitFor({ state: 'detached' });
      await row('Invented compression gauge').getByText('+0.5 psi').waitFor();
      await page.getByRole('region', { name: /Notifications/ }).getByText('Zero check logged').waitFor();
      await dismissToasts(page);
      await page.screenshot({ path: shot('instruments-1280'), fullPage: true });
      await page.setViewportSize({ width: 390, height: 844 });
      await page.getByRole('list', { name: 'Your instruments' }).getByText(wrenchName).waitFor();
      expect(await noSideScroll(page)).toBe(true);
      await page.screenshot({ path: shot('instruments-390'), fullPage: true });
      await page.setViewportSize({ width: 1280, height: 900 });

      const instruments = await api<{ items: { id: number; name: string }[] }>(page, 'GET', '/api/instruments');
      const idOf = (name: string) => String(instruments.json.items.find((i) => i.name === name)!.id);

      // 4. A build with a clip and two labelled moments (invented).
      const build = await api<{ build: { id: number } }>(page, 'POST', '/api/builds', {
        title: 'Invented twin, head and chambers (test)',
        subject: 'An invented engine for this test',
        parts: [{ name: 'Cylinder head', serial: 'TH-0911' }],
      });
      expect(build.status).toBe(201);
      const buildId = build.json.build.id;
      await page.goto(`${site.url}/builds/${buildId}`);
      await page.getByRole('heading', { name: 'Invented twin, head and chambers (test)' }).waitFor();
      await page.locator('input[type=file]').setInputFiles([clip]);
      await page.locator('ol[aria-label="Clips in timeline order"] >> text=Ready').first().waitFor({ timeout: 90_000 });
      const clips = await api<{ items: { id: number }[] }>(page, 'GET', `/api/builds/${buildId}/clips`);
      const clipId = clips.json.items[0]!.id;
      expect((await api(page, 'POST', `/api/clips/${clipId}/moments`, { atMs: 1000, label: 'Head bolt 1' })).status).toBe(201);
      expect((await api(page, 'POST', `/api/clips/${clipId}/moments`, { atMs: 2000, label: 'Chamber 1' })).status).toBe(201);
      await page.reload();
      await page.locator('video').waitFor();
      await page.waitForFunction(() => (document.querySelector('video')?.readyState ?? 0) >= 1);

      // 5. 35 lb-ft with the wrench: torque units only, no feeler bracket, no part temperature.
      await page.getByRole('button', { name: /^Log a reading at moment 1 \(Head bolt 1\)/ }).click();
      await form.locator('img[alt^="Evidence still at"]').waitFor();
      await form.getByLabel('Instrument').selectOption(idOf(wrenchName));
      const unit = form.getByLabel('Unit', { exact: true });
      await expect.poll(() => unit.inputValue()).toBe('lbf_ft');
      expect(await optionValues(unit)).toEqual(['N_m', 'lbf_ft', 'lbf_in']);
      await expect.poll(() => form.getByRole('radio', { name: /^Feeler bracket/ }).count()).toBe(0);
      expect(await form.getByRole('radio').count()).toBe(2);
      expect(await form.getByLabel(/^Temperature/).count()).toBe(0);
      expect(await form.getByLabel('Material').count()).toBe(0);
      expect(await form.getByLabel('Value as shown').getAttribute('placeholder')).toBe('e.g. 35 lb-ft, 420 lb-in or 47 N·m');
      await form.getByLabel('Value as shown').fill('35 lb-ft');
      // u = 1 lbf·ft / (2√3) = 0.29 lbf·ft (GUM F.2.2.1), the resolution alone.
      await form.getByText('reads as 35 lbf·ft; estimate 35 lbf·ft, u = 0.29 lbf·ft', { exact: true }).waitFor();
      await form.getByRole('table', { name: 'What u = 0.29 lbf·ft is made of, largest share first' }).waitFor();
      await dismissToasts(page);
      await form.screenshot({ path: shot('reading-torque-1280') });
      await form.getByRole('button', { name: 'Save reading' }).click();
      await form.waitFor({ state: 'detached' });
      const torqueRow = page.locator('[data-reading-row="head-bolt-1"]');
      await torqueRow.waitFor();
      expect(await torqueRow.getAttribute('aria-label')).toMatch(/^Head bolt 1, 35 lbf·ft ± 0\.29 lbf·ft, at /);
      await torqueRow.getByText('35 lb-ft', { exact: true }).waitFor();
      await torqueRow.getByText('± 0.29 lbf·ft', { exact: true }).waitFor();

      // 6. 64.2 cc with the burette: u = √(0.12² + (0.1/(2√3))²) = 0.1234 cc (GUM eq. 10).
      await page.getByRole('button', { name: /^Log a reading at moment 2 \(Chamber 1\)/ }).click();
      await form.locator('img[alt^="Evidence still at"]').waitFor();
      await form.getByLabel('Instrument').selectOption(idOf('Invented burette 100 cc'));
      await expect.poll(() => form.getByLabel('Unit', { exact: true }).inputValue()).toBe('cc');
      await form.getByLabel('Value as shown').fill('64.2 cc');
      await form.getByText('reads as 64.2 cc; estimate 64.2 cc, u = 0.12 cc', { exact: true }).waitFor();
      await form.getByRole('button', { name: 'Save reading' }).click();
      await form.waitFor({ state: 'detached' });
      const volumeRow = page.locator('[data-reading-row="chamber-1"]');
      await volumeRow.waitFor();
      expect(await volumeRow.getAttribute('aria-label')).toMatch(/^Chamber 1, 64\.2 cc ± 0\.12 cc, at /);
      await volumeRow.getByText('± 0.12 cc', { exact: true }).waitFor();
      const readings = await api<{ items: { key: string; unit: string; value: string; result: { value: number; valueUm: number | null } }[] }>(
        page,
        'GET',
        `/api/builds/${buildId}/readings`,
      );
      const byKey = Object.fromEntries(readings.json.items.map((r) => [r.key, r]));
      expect([byKey['head-bolt-1']!.unit, byKey['head-bolt-1']!.value, byKey['head-bolt-1']!.result.valueUm]).toEqual(['lbf_ft', '35', null]);
      expect([byKey['chamber-1']!.unit, byKey['chamber-1']!.value]).toEqual(['cc', '64.2']);
      // Edited in place: the box starts from what was typed; the history keeps 35 lbf·ft.
      await page.getByRole('button', { name: 'Actions for Head bolt 1' }).click();
      await page.getByRole('menuitem', { name: /^Edit/ }).click();
      const editor = page.getByRole('form', { name: 'Edit Head bolt 1' });
      await expect.poll(() => editor.getByLabel('Value as shown').inputValue()).toBe('35 lb-ft');
      await editor.getByLabel('Value as shown').fill('36 psi');
      await editor.getByRole('button', { name: 'Save' }).click();
      await editor.getByText(/pounds per square inch is not a torque/).waitFor();
      await editor.getByLabel('Value as shown').fill('36 lb-ft');
      await editor.getByRole('button', { name: 'Save' }).click();
      await editor.waitFor({ state: 'detached' });
      await torqueRow.getByText('36 lbf·ft', { exact: true }).waitFor();
      await page.getByRole('button', { name: 'Actions for Head bolt 1' }).click();
      await page.getByRole('menuitem', { name: 'History' }).click();
      const history = page.getByRole('dialog', { name: /History of/ });
      await history.getByText('35 lbf·ft', { exact: true }).waitFor();
      await history.getByText('pound-force feet (lbf·ft)', { exact: true }).waitFor();
      await history.getByRole('button', { name: 'Close' }).click();
      await dismissToasts(page);
      await page.locator('#readings').screenshot({ path: shot('readings-table-1280') });

      // 7. The form on a phone, with a torque reading typed: no sideways scroll.
      await page.setViewportSize({ width: 390, height: 844 });
      await page.locator('#workbench').scrollIntoViewIfNeeded();
      await page.getByRole('button', { name: /^Log a reading at moment 1 \(Head bolt 1\)/ }).click();
      await form.locator('img[alt^="Evidence still at"]').waitFor();
      await form.getByLabel('Instrument').selectOption(idOf(wrenchName));
      await form.getByLabel('Unit', { exact: true }).selectOption('lbf_in');
      await form.getByLabel('Value as shown').fill('420');
      await form.getByText('reads as 420 lbf·in', { exact: false }).waitFor();
      await form.locator('[data-reading-budget]').waitFor();
      expect(await noSideScroll(page)).toBe(true);
      await dismissToasts(page);
      await form.scrollIntoViewIfNeeded();
      await form.screenshot({ path: shot('reading-torque-390') });
      await form.getByRole('button', { name: 'Cancel' }).click();
      await form.waitFor({ state: 'detached' });
      await page.locator('[data-reading-card="head-bolt-1"]').getByText('± 0.29 lbf·ft (u)').waitFor();
      expect(await noSideScroll(page)).toBe(true);
      await page.setViewportSize({ width: 1280, height: 900 });

      // 8. A spec in lbf·ft: every unit offered, grouped, a ratio among them.
      await page.goto(`${site.url}/specs`);
      await page.getByRole('heading', { name: 'Spec library', level: 1 }).waitFor();
      await page.getByRole('button', { name: 'New spec' }).click();
      const specDialog = page.getByRole('dialog', { name: 'New spec' });
      await specDialog.getByRole('textbox', { name: /^Name/ }).fill('Invented head bolt torque');
      const specUnit = specDialog.getByLabel('Unit', { exact: true });
      const specGroups = await specUnit.locator('optgroup').evaluateAll((gs) => gs.map((g) => (g as HTMLOptGroupElement).label));
      expect(specGroups).toEqual(['Length', 'Volume', 'Angle', 'Torque', 'Pressure', 'Temperature', 'Time', 'Mass', 'Ratio']);
      expect(await specUnit.locator('option[value="1"]').textContent()).toBe('ratio (no unit)');
      await specUnit.selectOption('lbf_ft');
      await specDialog.getByLabel('Band from (lbf·ft)').fill('35');
      await specDialog.getByLabel('Band to (lbf·ft)').fill('40 lb-ft');
      await specDialog.getByLabel('Where the figures come from').fill('Invented for this test; not from any manual');
      await specDialog.locator('[data-band-summary]').getByText('35–40 lbf·ft').waitFor();
      await specDialog.getByRole('button', { name: 'Create spec' }).click();
      await page.getByRole('heading', { name: 'Invented head bolt torque', level: 1 }).waitFor();
      await page.locator('[data-spec-version="1"]').getByText('35–40 lbf·ft', { exact: true }).waitFor();
      await page.locator('[data-spec-version="1"]').getByText('pound-force feet', { exact: true }).waitFor();
      await dismissToasts(page);
      await page.screenshot({ path: shot('spec-torque-1280'), fullPage: true });
    } finally {
      await page.close();
    }
  }, 300_000);
});
