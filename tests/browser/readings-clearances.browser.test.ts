import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import type { Page } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { readingCsvColumns } from '../../shared/readings/reading.schema';
import { launchBrowser } from '../../scripts/lib/chromium';
import { repoRoot } from '../../scripts/lib/bootstrap';
import { startBrowserApp } from '../support/browser-app';
import { makeTestClip } from '../support/clips';
import { api } from '../support/page-api';

let site: Awaited<ReturnType<typeof startBrowserApp>>;
let browser: Awaited<ReturnType<typeof launchBrowser>>;
let work: string;
const artifacts = path.join(repoRoot, 'tests/artifacts');

beforeAll(async () => {
  work = fs.mkdtempSync(path.join(os.tmpdir(), 'benchproof-browser-readings-'));
  site = await startBrowserApp({ jobs: true });
  browser = await launchBrowser();
  fs.mkdirSync(artifacts, { recursive: true });
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

/** Closes the confirmation toasts, so a screenshot shows the screen under them. */
async function dismissToasts(page: Page) {
  const close = page.getByRole('button', { name: 'Dismiss notification' });
  while ((await close.count()) > 0) await close.first().click();
}

const playerTime = (page: Page) => page.evaluate(() => document.querySelector('video')!.currentTime);

describe('readings and clearances at the bench', () => {
  it('logs readings at moments, refuses bad figures beside their fields, defines a judged end float, sorts, filters, opens moments and exports CSV', async () => {
    const clip = await makeTestClip({ seconds: 5, format: 'mp4-h264', dir: work, name: 'pump-end-float' });
    await browser.clearCookies();
    const page = await browser.newPage();
    page.setDefaultTimeout(15_000);
    const form = page.locator('[data-reading-form]');
    try {
      await page.goto(`${site.url}/auth/github?login=demo-builder&returnTo=%2Fbuilds%2Fnew`);
      await page.getByRole('heading', { name: 'New build' }).waitFor();
      await page.getByLabel('Title').fill('Pump end float, readings check (test)');
      await page.getByLabel('What is being built').fill('An invented oil pump for this test');
      await page.getByRole('button', { name: 'Add a part' }).click();
      await page.getByLabel('Part 1', { exact: true }).fill('Oil pump');
      await page.getByLabel('Serial of part 1').fill('TP-0417');
      await page.getByRole('button', { name: 'Add a part' }).click();
      await page.getByLabel('Part 2', { exact: true }).fill('Crank');
      await page.getByLabel('Serial of part 2').fill('TC-2291');
      await page.getByRole('button', { name: 'Create build' }).click();
      await page.getByRole('heading', { name: 'Pump end float, readings check (test)' }).waitFor();
      const buildId = Number(/\/builds\/(\d+)/.exec(page.url())?.[1]);
      expect(buildId).toBeGreaterThan(0);

      // Instruments and a spec through the API (invented; the test database has no demo seed).
      const instrument = async (body: Record<string, unknown>) => {
        const r = await api<{ instrument: { id: number } }>(page, 'POST', '/api/instruments', body);
        expect(r.status).toBe(201);
        return r.json.instrument.id;
      };
      const calibrated = { lastCalibratedOn: today(), calibrationIntervalDays: 365, calibratedBy: 'invented test lab' };
      const depthMic = await instrument({ name: 'Test depth micrometer 0–6 in', kind: 'depth-micrometer', serial: 'TD-01', unit: 'in', resolution: '0.0001', ...calibrated });
      const outsideMic = await instrument({ name: 'Test outside micrometer 0–1 in', kind: 'outside-micrometer', serial: 'TO-01', unit: 'in', resolution: '0.0001', ...calibrated });
      const blades = await instrument({ name: 'Test feeler blades', kind: 'feeler-blades', serial: 'TF-01', unit: 'in', resolution: '0.0005', ...calibrated });
      const spec = await api<{ spec: { id: number } }>(page, 'POST', '/api/specs', {
        name: 'Test pump end float (invented)',
        appliesTo: 'invented test pump',
        unit: 'in',
        min: '0.002',
        max: '0.005',
        rule: 'guarded',
        source: { kind: 'common-practice', text: 'Invented for this test; not from any manual' },
      });
      expect(spec.status).toBe(201);

      await page.locator('input[type=file]').setInputFiles([clip]);
      await page.locator('ol[aria-label="Clips in timeline order"] >> text=Ready').first().waitFor({ timeout: 90_000 });
      await page.locator('video').waitFor();
      await page.waitForFunction(() => (document.querySelector('video')?.readyState ?? 0) >= 1);

      // 1. A depth at about 1 s, from the button: the moment is marked and its still shows at once.
      await page.getByRole('button', { name: 'Forward 1 second' }).click();
      await page.getByRole('button', { name: 'Log a reading', exact: true }).click();
      await form.waitFor();
      await form.locator('img[alt^="Evidence still at"]').waitFor();
      const firstStill = await form.locator('img').getAttribute('src');
      // The still follows a nudge of one frame each way (to the middle of the frame: 1.050 s, then 1.017 s at 30 fps).
      expect(firstStill).toContain('t=1.000');
      await form.getByRole('button', { name: 'Nudge the moment one frame later' }).click();
      await page.waitForFunction(() => document.querySelector('[data-reading-form] img')?.getAttribute('src')?.endsWith('t=1.050'));
      await form.getByRole('button', { name: 'Nudge the moment one frame earlier' }).click();
      await page.waitForFunction(() => document.querySelector('[data-reading-form] img')?.getAttribute('src')?.endsWith('t=1.017'));
      await expect.poll(() => playerTime(page)).toBeCloseTo(1.017, 2);

      // A timestamp past the clip's end is refused beside the moment's time.
      await form.getByLabel('Moment at').fill('9');
      await form.getByRole('button', { name: 'Move' }).click();
      const timeError = form.getByRole('alert').filter({ hasText: 'after the end of the clip' });
      await timeError.waitFor();
      expect(await form.getByLabel('Moment at').getAttribute('aria-invalid')).toBe('true');
      await form.getByLabel('Moment at').fill('1.017');
      await form.getByRole('button', { name: 'Move' }).click();
      await timeError.waitFor({ state: 'detached' });

      await form.getByLabel('Name').fill('Bore depth');
      await form.getByLabel('Instrument').selectOption(String(depthMic));
      await form.getByLabel('Part').selectOption({ label: 'Oil pump · TP-0417' });
      // The zero-checked instrument with no check today says so right there.
      await form.getByText(/No zero check on/).waitFor();
      // A unit the engine cannot read is refused beside the value, live and on saving.
      await form.getByLabel('Value as shown').fill('0.5642 furlongs');
      await form.getByText('"furlongs" is not a unit Benchproof reads', { exact: false }).first().waitFor();
      await form.getByRole('button', { name: 'Save reading' }).click();
      await expect.poll(() => form.locator('[id$="-error"]').allTextContents()).toEqual(expect.arrayContaining([expect.stringContaining('furlongs')]));
      await form.getByLabel('Value as shown').fill('0.5642');
      await form.getByText('reads as 0.5642 in').waitFor();
      await dismissToasts(page);
      await page.screenshot({ path: path.join(artifacts, 'readings-clearances-form-1280.png'), fullPage: true });
      await form.getByRole('button', { name: 'Save reading' }).click();
      await form.waitFor({ state: 'detached' });
      await page.locator('[data-reading-row="bore-depth"]').waitFor();

      // 2. A height at about 2 s, from the R key.
      await page.getByRole('button', { name: 'Forward 1 second' }).click();
      await page.keyboard.press('r');
      await form.locator('img[alt^="Evidence still at"]').waitFor();
      await expect.poll(() => page.evaluate(() => document.activeElement?.closest('[data-reading-form]') !== null)).toBe(true);
      await form.getByLabel('Name').fill('Rotor height');
      await form.getByLabel('Instrument').selectOption(String(outsideMic));
      await form.getByLabel('Part').selectOption({ label: 'Oil pump · TP-0417' });
      await form.getByLabel('Value as shown').fill('0.5600 in');
      await form.getByText('reads as 0.5600 in').waitFor();
      await form.getByRole('button', { name: 'Save reading' }).click();
      await page.locator('[data-reading-row="rotor-height"]').waitFor();

      // 3. A feeler bracket at about 3 s: a negative blade and a backwards bracket are refused by name.
      await page.getByRole('button', { name: 'Forward 1 second' }).click();
      await page.getByRole('button', { name: 'Log a reading', exact: true }).click();
      await form.locator('img[alt^="Evidence still at"]').waitFor();
      await form.getByLabel('Name').fill('Outer rotor to body');
      await form.getByLabel('Instrument').selectOption(String(blades));
      await expect(form.getByLabel('Feeler bracket').isChecked()).resolves.toBe(true);
      await form.getByLabel('Part').selectOption('');
      await form.getByLabel('Thickest blade that enters').fill('-0.001');
      await form.getByLabel('Thinnest blade that does not').fill('0.002');
      await form.getByRole('button', { name: 'Save reading' }).click();
      await form.getByText('a feeler blade cannot be thinner than nothing', { exact: false }).first().waitFor();
      await form.getByLabel('Thickest blade that enters').fill('0.006');
      await form.getByLabel('Thinnest blade that does not').fill('0.005');
      await form.getByRole('button', { name: 'Save reading' }).click();
      const stopsError = form.locator('[id$="-error"]', { hasText: 'The blade that does not enter must be thicker than the one that enters (0.006 in enters, 0.005 in does not).' });
      await stopsError.waitFor();
      // The refusal sits with the "does not enter" box it is about.
      const stopsBox = form.getByLabel('Thinnest blade that does not');
      expect(await stopsBox.getAttribute('aria-invalid')).toBe('true');
      expect(await stopsBox.getAttribute('aria-describedby')).toContain(await stopsError.getAttribute('id'));
      await stopsBox.fill('0.007');
      await form.getByText('reads as 0.006 in enters, 0.007 in does not', { exact: false }).waitFor();
      await form.getByRole('button', { name: 'Save reading' }).click();
      await page.locator('[data-reading-row="outer-rotor-to-body"]').waitFor();

      const readings = page.locator('[data-reading-row]');
      await expect.poll(() => readings.count()).toBe(3);
      // Feeler bracket midpoint (0.006 + 0.007)/2 = 0.0065 in with u = a/√3, a = 0.0005 in → 0.00029 in (JCGM 100:2008, 4.3.7).
      await expect.poll(() => page.locator('[data-reading-row="outer-rotor-to-body"]').textContent()).toMatch(/0\.0065 in\s*± 0\.00029 in/);
      await dismissToasts(page);
      await page.locator('#readings').screenshot({ path: path.join(artifacts, 'readings-clearances-table-1280.png') });

      // Sorting: by estimate, smallest first; then largest first.
      const order = () => readings.evaluateAll((rows) => rows.map((r) => r.getAttribute('data-reading-row')));
      await page.getByRole('button', { name: /Estimate ± u/ }).click();
      await expect.poll(order).toEqual(['outer-rotor-to-body', 'rotor-height', 'bore-depth']);
      await page.getByRole('button', { name: /Estimate ± u/ }).click();
      await expect.poll(order).toEqual(['bore-depth', 'rotor-height', 'outer-rotor-to-body']);
      // Filters: by part, then by instrument.
      const filters = page.getByRole('group', { name: 'Filter the readings' });
      await filters.getByLabel('Part').selectOption({ label: 'Oil pump · TP-0417' });
      await expect.poll(order).toEqual(['bore-depth', 'rotor-height']);
      await filters.getByLabel('Part').selectOption('');
      await filters.getByLabel('Instrument').selectOption(String(blades));
      await expect.poll(order).toEqual(['outer-rotor-to-body']);
      await page.getByRole('button', { name: 'Clear filters' }).click();
      await expect.poll(() => readings.count()).toBe(3);

      // A row opens its moment: the player goes to that time.
      const list = await api<{ items: { key: string; atMs: number; id: number; lockVersion: number }[] }>(page, 'GET', `/api/builds/${buildId}/readings`);
      const bore = list.json.items.find((r) => r.key === 'bore-depth')!;
      const rotor = list.json.items.find((r) => r.key === 'rotor-height')!;
      expect(bore.atMs).toBe(1017);
      await page.locator('[data-reading-row="bore-depth"] td').first().click();
      await expect.poll(() => playerTime(page)).toBeCloseTo(bore.atMs / 1000, 2);
      // …and Enter on a focused row does the same.
      await page.locator('[data-reading-row="rotor-height"]').focus();
      await page.keyboard.press('Enter');
      await expect.poll(() => playerTime(page)).toBeCloseTo(rotor.atMs / 1000, 2);

      // Inline edit from a stale version: refused with the conflict message, then reloaded and saved.
      await page.getByRole('button', { name: 'Actions for Rotor height' }).click();
      await page.getByRole('menuitem', { name: /^Edit/ }).click();
      const elsewhere = await api(page, 'PATCH', `/api/readings/${rotor.id}`, { lockVersion: rotor.lockVersion, note: 'changed in another tab' });
      expect(elsewhere.status).toBe(200);
      const editor = page.getByRole('form', { name: 'Edit Rotor height' });
      await editor.getByLabel('Name').fill('Rotor height, inner');
      await editor.getByRole('button', { name: 'Save' }).click();
      await editor.getByText('Saved elsewhere since you opened it').waitFor();
      await dismissToasts(page);
      await page.locator('#readings').screenshot({ path: path.join(artifacts, 'readings-clearances-edit-conflict-1280.png') });
      await editor.getByRole('button', { name: 'Reload' }).click();
      await editor.getByText(/Reloaded the version saved elsewhere/).waitFor();
      await editor.getByRole('button', { name: 'Save' }).click();
      await page.locator('[data-reading-row="rotor-height"]', { hasText: 'Rotor height, inner' }).waitFor();
      // Its history keeps both earlier states.
      await page.getByRole('button', { name: 'Actions for Rotor height, inner' }).click();
      await page.getByRole('menuitem', { name: 'History' }).click();
      const history = page.getByRole('dialog', { name: /History of/ });
      await expect.poll(() => history.getByRole('listitem').count()).toBe(2);
      await history.getByRole('button', { name: 'Close' }).click();

      // 4. The end float from the template, against the spec.
      await page.getByRole('button', { name: 'New result' }).click();
      const clearanceForm = page.getByRole('form', { name: 'New result' });
      await expect(clearanceForm.getByLabel(/End float from a depth and a height/).isChecked()).resolves.toBe(true);
      await clearanceForm.getByText('The rotor height is subtracted from the bore depth', { exact: false }).waitFor();
      await clearanceForm.getByLabel('Bore depth', { exact: true }).selectOption(String(bore.id));
      await clearanceForm.getByLabel('Rotor height', { exact: true }).selectOption(String(rotor.id));
      // 0.5642 − 0.5600 = 0.0042 in; each reading u = 0.0001/(2√3) in (GUM F.2.2.1), u_c = √2·u (GUM eq. 10),
      // U = 2·u_c = 0.0000816 in (GUM 6.2.1), stated to two significant digits (GUM 7.2.6).
      await clearanceForm.getByText(/0\.004200 in ± 0\.00007[78] in \(95 %, k = 1\.9[01]\)/).first().waitFor();
      await clearanceForm.getByLabel('Search the spec library').fill('pump end float');
      await clearanceForm.getByRole('button', { name: 'Use Test pump end float (invented)' }).click();
      await clearanceForm.getByText('Invented for this test; not from any manual', { exact: false }).first().waitFor();
      // Guarded rule (ISO 14253-1 with w = U, ILAC-G8:09/2019): within spec when 0.002 + U ≤ 0.0042 ≤ 0.005 − U.
      const verdict = clearanceForm.locator('[data-clearance-result] [data-verdict]').first();
      await expect.poll(() => verdict.getAttribute('data-verdict')).toBe('conforms');
      expect(await verdict.textContent()).toContain('Within spec');
      expect(await verdict.textContent()).toMatch(/guarded rule, k = 1\.9[01]/);
      await clearanceForm.locator('[data-band-picture] svg').waitFor();
      await dismissToasts(page);
      await page.getByRole('form', { name: 'New result' }).screenshot({ path: path.join(artifacts, 'readings-clearances-clearance-form-1280.png') });
      await clearanceForm.getByRole('button', { name: 'Save result' }).click();
      const saved = page.locator('[data-clearance="end-float"]');
      await saved.waitFor();
      expect(await saved.textContent()).toContain('bore-depth − rotor-height');
      expect(await saved.locator('[data-verdict]').first().getAttribute('data-verdict')).toBe('conforms');
      expect(await saved.textContent()).toContain('Test pump end float (invented) · v1');

      // A reading the clearance uses cannot be deleted: the server's reason is shown.
      await page.getByRole('button', { name: 'Actions for Bore depth' }).click();
      await page.getByRole('menuitem', { name: 'Delete' }).click();
      await page.getByRole('dialog').getByRole('button', { name: 'Delete reading' }).click();
      await page.getByRole('alert').filter({ hasText: '“Bore depth” was not deleted' }).waitFor();
      await expect.poll(() => readings.count()).toBe(3);

      // Export: the CSV has the documented columns and the readings as stored.
      const csv = await page.evaluate(async () => {
        const href = document.querySelector<HTMLAnchorElement>('a[download]')!.href;
        const r = await fetch(href);
        return { status: r.status, type: r.headers.get('content-type'), text: await r.text() };
      });
      expect(csv.status).toBe(200);
      expect(csv.type).toContain('text/csv');
      const [header, ...lines] = csv.text.trim().split(/\r?\n/);
      expect(header!.replace(/"/g, '')).toBe(readingCsvColumns.join(','));
      expect(lines).toHaveLength(3);
      expect(csv.text).toContain('bore-depth');
      expect(csv.text).toContain('0.5642');

      // Narrow screen: the same screens at 390 px.
      await page.setViewportSize({ width: 390, height: 844 });
      await page.locator('#workbench').scrollIntoViewIfNeeded();
      await page.getByRole('button', { name: 'Log a reading', exact: true }).click();
      await form.locator('img[alt^="Evidence still at"]').waitFor();
      await form.getByLabel('Name').fill('Crank end float');
      await form.scrollIntoViewIfNeeded();
      await dismissToasts(page);
      await page.screenshot({ path: path.join(artifacts, 'readings-clearances-form-390.png'), fullPage: false });
      await form.getByRole('button', { name: 'Cancel' }).click();
      await form.waitFor({ state: 'detached' });
      await dismissToasts(page);
      // A phone gets one card per reading instead of the wide table.
      await expect.poll(() => page.locator('[data-reading-card]').count()).toBe(3);
      await page.locator('#readings').screenshot({ path: path.join(artifacts, 'readings-clearances-table-390.png') });
      await page.getByRole('button', { name: 'Edit End float' }).click();
      const editClearance = page.getByRole('form', { name: 'Edit result End float' });
      await editClearance.locator('[data-band-picture] svg').waitFor();
      await dismissToasts(page);
      await editClearance.screenshot({ path: path.join(artifacts, 'readings-clearances-clearance-form-390.png') });
      await editClearance.getByRole('button', { name: 'Cancel' }).click();
      await page.setViewportSize({ width: 1280, height: 860 });
      await dismissToasts(page);
      await page.screenshot({ path: path.join(artifacts, 'readings-clearances-workspace-1280.png'), fullPage: true });
    } finally {
      await page.close();
    }
  }, 240_000);
});
