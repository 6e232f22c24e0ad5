import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import AxeBuilder from '@axe-core/playwright';
import type { Locator, Page } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { launchBrowser } from '../../scripts/lib/chromium';
import { startBrowserApp } from '../support/browser-app';
import { makeTestClip } from '../support/clips';
import { api } from '../support/page-api';

/*
 * The reading and clearance forms as a builder uses them at the bench: the form follows what was
 * chosen (the instrument sets how it was read, the clip's last instrument and part come back, the
 * moment's label names the reading), keys are suggested free in the build, and refusals speak the
 * form's words beside their boxes. Screenshots go to /tmp/forms-shots/.
 */

let site: Awaited<ReturnType<typeof startBrowserApp>>;
let browser: Awaited<ReturnType<typeof launchBrowser>>;
let work: string;
const shots = '/tmp/forms-shots';

beforeAll(async () => {
  work = fs.mkdtempSync(path.join(os.tmpdir(), 'benchproof-browser-bench-forms-'));
  site = await startBrowserApp({ jobs: true });
  browser = await launchBrowser();
  fs.mkdirSync(shots, { recursive: true });
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
}

/** axe-core on part of the page; serious and critical violations fail, the rest are printed. */
async function axeProblems(page: Page, selector: string, what: string): Promise<string[]> {
  const results = await new AxeBuilder({ page }).include(selector).withTags(['wcag2a', 'wcag2aa', 'wcag21a', 'wcag21aa']).analyze();
  const bad = results.violations.filter((v) => v.impact === 'serious' || v.impact === 'critical');
  for (const v of results.violations.filter((x) => !bad.includes(x))) console.log(`[axe ${v.impact}] ${what}: ${v.id} — ${v.help} (${v.nodes.length})`);
  return bad.map((v) => `${v.impact} ${v.id}: ${v.help} — ${v.nodes.slice(0, 3).map((n) => n.target.join(' ')).join(' | ')}`);
}

const checked = (control: Locator) => control.isChecked();

/** Whether an element's content fits its width (a table frame that does not scroll sideways). */
const fitsItsBox = (frame: Locator) => frame.evaluate((el) => el.scrollWidth <= el.clientWidth);

/**
 * The micrometer's reading of 0.0040 in, as its budget table: the calibration, u = U/k =
 * 0.0002 in / 2 = 0.00010 in, normal (GUM 4.3.3), and the resolution, u = 0.0001 in/(2√3) =
 * 0.000029 in, rectangular (GUM F.2.2.1); u² = 1.0000e-8 + 0.0833e-8 in², so the shares are
 * 1/1.0833 = 92.3 % and 7.7 %, and u = 0.00010 in (GUM eq. 10).
 */
async function expectMicrometerBudget(form: Locator) {
  const table = form.getByRole('table', { name: 'What u = 0.00010 in is made of, largest share first' });
  await table.waitFor();
  expect(await table.locator('thead th[scope="col"]').allTextContents()).toEqual(['Source', 'u (in)', 'ν', 'Share']);
  const rows = table.locator('tbody tr');
  await expect.poll(() => rows.count()).toBe(2);
  const row = async (i: number) => ({
    // The row's header: the source in words, then its distribution and divisor on a line of their own.
    source: (await rows.nth(i).locator('th[scope="row"]').innerText()).split('\n').map((t) => t.trim()).filter(Boolean),
    cells: (await rows.nth(i).locator('td').allTextContents()).map((t) => t.trim()),
  });
  const calibration = await row(0);
  expect(calibration.source[0]).toMatch(/^Calibration of Bench test micrometer 0–1 in \(U = 0\.00020 in\b.*, k = 2\)$/);
  expect(calibration.source[1]).toBe('normal, ÷ 2 · the instrument’s own, shared by its readings');
  expect(calibration.cells).toEqual(['0.00010', '∞', '92.3 %']);
  const resolution = await row(1);
  expect(resolution.source).toEqual(['Resolution 0.0001 in', 'rectangular, ÷ √3']);
  expect(resolution.cells).toEqual(['0.000029', '∞', '7.7 %']);
}

describe('the reading and clearance forms at the bench', () => {
  it('follow what was chosen, suggest free keys, and refuse in the words on the screen', async () => {
    const clip = await makeTestClip({ seconds: 4, format: 'mp4-h264', dir: work, name: 'rotor-gaps' });
    await browser.clearCookies();
    const page = await browser.newPage();
    await page.setViewportSize({ width: 1280, height: 900 });
    page.setDefaultTimeout(15_000);
    const form = page.locator('[data-reading-form]');
    try {
      await page.goto(`${site.url}/auth/github?login=demo-builder&returnTo=%2Fbuilds`);
      await page.locator('main').first().waitFor();

      // Fixtures through the API (invented; the test database has no demo seed).
      const build = await api<{ build: { id: number; parts: { id: number; name: string }[] } }>(page, 'POST', '/api/builds', {
        title: 'Invented rotor pump, bench forms (test)',
        subject: 'An invented oil pump for this test',
        parts: [
          { name: 'Oil pump', serial: 'TP-0502' },
          { name: 'Crank', serial: 'TC-3380' },
        ],
      });
      expect(build.status).toBe(201);
      const buildId = build.json.build.id;
      const calibrated = { lastCalibratedOn: today(), calibrationIntervalDays: 365, calibratedBy: 'invented test lab' };
      const instrument = async (body: Record<string, unknown>) => {
        const r = await api<{ instrument: { id: number } }>(page, 'POST', '/api/instruments', { ...calibrated, ...body });
        expect(r.status).toBe(201);
        return r.json.instrument.id;
      };
      // Calibrated to U = 0.0002 in at k = 2, so its budget has a line of its own beside the resolution.
      const mic = await instrument({
        name: 'Bench test micrometer 0–1 in',
        kind: 'outside-micrometer',
        serial: 'BT-01',
        unit: 'in',
        resolution: '0.0001',
        calibrationUncertainty: '0.0002',
        calibrationCoverageFactor: 2,
      });
      const blades = await instrument({ name: 'Bench test feeler set', kind: 'feeler-blades', serial: 'BT-02', unit: 'in', resolution: '0.0005' });

      await page.goto(`${site.url}/builds/${buildId}`);
      await page.getByRole('heading', { name: 'Invented rotor pump, bench forms (test)' }).waitFor();
      await page.locator('input[type=file]').setInputFiles([clip]);
      await page.locator('ol[aria-label="Clips in timeline order"] >> text=Ready').first().waitFor({ timeout: 90_000 });
      const clips = await api<{ items: { id: number }[] }>(page, 'GET', `/api/builds/${buildId}/clips`);
      const clipId = clips.json.items[0]!.id;
      const label = 'Outer rotor to body';
      expect((await api(page, 'POST', `/api/clips/${clipId}/moments`, { atMs: 1000, label })).status).toBe(201);
      await page.reload();
      await page.locator('video').waitFor();
      await page.waitForFunction(() => (document.querySelector('video')?.readyState ?? 0) >= 1);

      // 1. From the labelled moment: the label names the reading.
      await page.getByRole('button', { name: /^Log a reading at moment 1 \(Outer rotor to body\)/ }).click();
      await form.locator('img[alt^="Evidence still at"]').waitFor();
      const name = form.getByLabel('Name');
      await expect.poll(() => name.inputValue()).toBe(label);
      // Typed over, the label stays one click away.
      await name.fill('Rotor gap');
      const useLabel = form.getByRole('button', { name: 'Use it as the name' });
      await useLabel.waitFor();
      await dismissToasts(page);
      await form.screenshot({ path: path.join(shots, 'reading-form-label-offered-1280.png') });
      await useLabel.click();
      await expect.poll(() => name.inputValue()).toBe(label);
      await expect.poll(() => useLabel.count()).toBe(0);
      await form.getByText('Key outer-rotor-to-body', { exact: false }).waitFor();

      // 2. How it was read follows the instrument until it is picked by hand.
      const instrumentBox = form.getByLabel('Instrument');
      const direct = form.getByRole('radio', { name: /^One indication/ });
      const bracket = form.getByRole('radio', { name: /^Feeler bracket/ });
      await instrumentBox.selectOption(String(mic));
      await expect.poll(() => checked(direct)).toBe(true);
      // A value typed for the micrometer does not hold the kind back.
      await form.getByLabel('Value as shown').fill('0.0040');
      // Read back live, with what its u is made of as a table, one row per component.
      await form.getByText('reads as 0.0040 in; estimate 0.0040 in, u = 0.00010 in', { exact: true }).waitFor();
      await expectMicrometerBudget(form);
      await dismissToasts(page);
      await form.screenshot({ path: path.join(shots, 'reading-budget-1280.png') });
      expect(await fitsItsBox(form.locator('[data-reading-budget] [data-table-frame]'))).toBe(true);
      await instrumentBox.selectOption(String(blades));
      await expect.poll(() => checked(bracket)).toBe(true);
      // With feeler blades, one indication is offered as a single blade.
      await form.getByText('a single blade that enters with a light drag').waitFor();
      await direct.check();
      await instrumentBox.selectOption(String(mic));
      await instrumentBox.selectOption(String(blades));
      await expect.poll(() => checked(direct)).toBe(true);
      await bracket.check();
      await form.getByLabel('Part').selectOption({ label: 'Oil pump · TP-0502' });

      // 3. A bracket whose "does not enter" blade is thinner: refused beside that box, in the form's words.
      await form.getByLabel('Thickest blade that enters').fill('0.004');
      await form.getByLabel('Thinnest blade that does not').fill('0.003');
      await form.getByRole('button', { name: 'Save reading' }).click();
      const sentence = 'The blade that does not enter must be thicker than the one that enters (0.004 in enters, 0.003 in does not).';
      const stopsError = form.locator('[id$="-error"]', { hasText: sentence });
      await stopsError.waitFor();
      const stopsBox = form.getByLabel('Thinnest blade that does not');
      expect(await stopsBox.getAttribute('aria-invalid')).toBe('true');
      expect(await stopsBox.getAttribute('aria-describedby')).toContain(await stopsError.getAttribute('id'));
      expect(await form.textContent()).not.toMatch(/\bstops\b|\bpasses\b/);
      await dismissToasts(page);
      await form.scrollIntoViewIfNeeded();
      await page.screenshot({ path: path.join(shots, 'reading-form-refused-1280.png'), fullPage: false });
      await form.screenshot({ path: path.join(shots, 'reading-form-only-1280.png') });
      expect(await axeProblems(page, '[data-reading-form]', 'reading form, 1280')).toEqual([]);

      await stopsBox.fill('0.005');
      await form.getByText('reads as 0.004 in enters, 0.005 in does not', { exact: false }).waitFor();
      await form.getByRole('button', { name: 'Save reading' }).click();
      await form.waitFor({ state: 'detached' });
      await page.locator('[data-reading-row="outer-rotor-to-body"]').waitFor();

      // 4. The next reading on this clip starts with its instrument and part, read as a bracket.
      await page.getByRole('button', { name: 'Forward 1 second' }).click();
      await page.getByRole('button', { name: 'Log a reading', exact: true }).click();
      await form.locator('img[alt^="Evidence still at"]').waitFor();
      await expect.poll(() => form.getByLabel('Instrument').inputValue()).toBe(String(blades));
      await expect.poll(() => form.getByLabel('Part').inputValue()).toBe(String(build.json.build.parts[0]!.id));
      await expect.poll(() => checked(form.getByRole('radio', { name: /^Feeler bracket/ }))).toBe(true);
      // The same name again: the key shown is the free one the server will give it.
      await form.getByLabel('Name').fill(label);
      await form.getByText('Key outer-rotor-to-body-2', { exact: false }).waitFor();
      await form.getByLabel('Thickest blade that enters').fill('0.005');
      await form.getByLabel('Thinnest blade that does not').fill('0.006');
      await form.getByRole('button', { name: 'Save reading' }).click();
      await form.waitFor({ state: 'detached' });
      await page.locator('[data-reading-row="outer-rotor-to-body-2"]').waitFor();
      const readings = await api<{ items: { id: number; key: string; partId: number | null }[] }>(page, 'GET', `/api/builds/${buildId}/readings`);
      const [first, second] = ['outer-rotor-to-body', 'outer-rotor-to-body-2'].map((key) => readings.json.items.find((r) => r.key === key)!);
      expect(second!.partId).toBe(build.json.build.parts[0]!.id);

      // 5. Two feeler clearances without touching the key: both saved, each with its own key.
      const clearanceForm = page.getByRole('form', { name: 'New result' });
      const defineGap = async (readingId: number, expectedKey: string) => {
        await page.getByRole('button', { name: 'New result' }).click();
        await clearanceForm.getByLabel(/A gap from a feeler bracket/).check();
        await clearanceForm.getByLabel('Feeler bracket', { exact: true }).selectOption(String(readingId));
        await expect.poll(() => clearanceForm.getByRole('textbox', { name: 'Name', exact: true }).inputValue()).toBe(label);
        await expect.poll(() => clearanceForm.getByRole('textbox', { name: 'Key', exact: true }).inputValue()).toBe(expectedKey);
        await clearanceForm.getByText(/0\.00\d+ in ± /).first().waitFor();
      };
      await defineGap(first!.id, 'outer-rotor-to-body');
      await dismissToasts(page);
      await clearanceForm.screenshot({ path: path.join(shots, 'clearance-form-1280.png') });
      expect(await axeProblems(page, 'form[aria-label="New result"]', 'clearance form, 1280')).toEqual([]);
      await clearanceForm.getByRole('button', { name: 'Save result' }).click();
      await page.locator('[data-clearance="outer-rotor-to-body"]').waitFor();
      await defineGap(second!.id, 'outer-rotor-to-body-2');
      await clearanceForm.getByRole('button', { name: 'Save result' }).click();
      await page.locator('[data-clearance="outer-rotor-to-body-2"]').waitFor();
      const saved = await api<{ items: { key: string; name: string }[] }>(page, 'GET', `/api/builds/${buildId}/clearances`);
      expect(saved.json.items.map((c) => c.key).sort()).toEqual(['outer-rotor-to-body', 'outer-rotor-to-body-2']);

      // A key typed by hand stays when the name changes; the suggestion follows the name until then.
      await page.getByRole('button', { name: 'New result' }).click();
      const keyBox = clearanceForm.getByRole('textbox', { name: 'Key', exact: true });
      const nameBox = clearanceForm.getByRole('textbox', { name: 'Name', exact: true });
      await nameBox.fill('Inner rotor tip');
      await expect.poll(() => keyBox.inputValue()).toBe('inner-rotor-tip');
      await keyBox.fill('tip-gap-lobe-1');
      await nameBox.fill('Inner rotor tip, lobe 1');
      await expect.poll(() => keyBox.inputValue()).toBe('tip-gap-lobe-1');
      await clearanceForm.getByRole('button', { name: 'Cancel' }).click();
      await clearanceForm.waitFor({ state: 'detached' });

      // 6. The same forms on a phone.
      await page.setViewportSize({ width: 390, height: 844 });
      await page.locator('#workbench').scrollIntoViewIfNeeded();
      await page.getByRole('button', { name: /^Log a reading at moment 1 \(Outer rotor to body\)/ }).click();
      await form.locator('img[alt^="Evidence still at"]').waitFor();
      await form.getByLabel('Thickest blade that enters').fill('0.004');
      await form.getByLabel('Thinnest blade that does not').fill('0.0035');
      await form.getByRole('button', { name: 'Save reading' }).click();
      await form.locator('[id$="-error"]', { hasText: 'The blade that does not enter must be thicker' }).waitFor();
      await dismissToasts(page);
      await form.scrollIntoViewIfNeeded();
      await page.screenshot({ path: path.join(shots, 'reading-form-refused-390.png'), fullPage: false });
      await form.screenshot({ path: path.join(shots, 'reading-form-only-390.png') });
      expect(await axeProblems(page, '[data-reading-form]', 'reading form, 390')).toEqual([]);
      // The micrometer's budget on a phone: the table fits the form, and the page does not scroll sideways.
      await form.getByLabel('Instrument').selectOption(String(mic));
      await form.getByLabel('Value as shown').fill('0.0040');
      await expectMicrometerBudget(form);
      expect(await fitsItsBox(form.locator('[data-reading-budget] [data-table-frame]'))).toBe(true);
      expect(await page.evaluate(() => document.documentElement.scrollWidth <= window.innerWidth)).toBe(true);
      await dismissToasts(page);
      await form.locator('[data-reading-budget]').scrollIntoViewIfNeeded();
      await form.screenshot({ path: path.join(shots, 'reading-budget-390.png') });
      expect(await axeProblems(page, '[data-reading-form]', 'reading form with its budget, 390')).toEqual([]);
      await form.getByRole('button', { name: 'Cancel' }).click();
      await form.waitFor({ state: 'detached' });

      await page.getByRole('button', { name: 'New result' }).click();
      await clearanceForm.getByLabel(/A gap from a feeler bracket/).check();
      await clearanceForm.getByLabel('Feeler bracket', { exact: true }).selectOption(String(first!.id));
      await expect.poll(() => clearanceForm.getByRole('textbox', { name: 'Key', exact: true }).inputValue()).toBe('outer-rotor-to-body-3');
      await dismissToasts(page);
      await clearanceForm.screenshot({ path: path.join(shots, 'clearance-form-390.png') });
      expect(await axeProblems(page, 'form[aria-label="New result"]', 'clearance form, 390')).toEqual([]);
      await clearanceForm.getByRole('button', { name: 'Cancel' }).click();
    } finally {
      await page.close();
    }
  }, 240_000);
});
