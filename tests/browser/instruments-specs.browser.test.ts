import fs from 'node:fs';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { launchBrowser } from '../../scripts/lib/chromium';
import { repoRoot } from '../../scripts/lib/bootstrap';
import { seedDemo } from '../../server/db/seed';
import { Instrument, ZeroCheck } from '../../server/features/instruments/instrument.model';
import { Spec, SpecVersion } from '../../server/features/specs/spec.model';
import { startBrowserApp } from '../support/browser-app';

let site: Awaited<ReturnType<typeof startBrowserApp>>;
let browser: Awaited<ReturnType<typeof launchBrowser>>;
const artifacts = path.join(repoRoot, 'tests/artifacts');
const shot = (name: string) => path.join(artifacts, `instruments-specs-${name}.png`);
// Unique per run, so a rerun on a kept database never finds last run's rows.
const run = Math.floor(Math.random() * 1e6);

/** Closes the confirmation toasts so they do not cover the rows in a screenshot. */
async function dismissToasts(page: Awaited<ReturnType<typeof browser.newPage>>) {
  const close = page.getByRole('button', { name: 'Dismiss notification' });
  while ((await close.count()) > 0) await close.first().click();
  await page.waitForTimeout(350);
}

beforeAll(async () => {
  site = await startBrowserApp();
  // The invented demo register and starter specs, as `npm start` seeds them.
  await seedDemo(site.sequelize);
  browser = await launchBrowser();
  fs.mkdirSync(artifacts, { recursive: true });
}, 240_000);
afterAll(async () => {
  await browser?.dispose();
  await site?.close();
});

describe('a builder keeps an instruments register and a spec library', () => {
  it('sees the seeded instruments, is refused a bad resolution beside the field, adds one, sees it overdue, logs a zero check, meets a conflict and retires it', async () => {
    await browser.clearCookies();
    const page = await browser.newPage();
    page.setDefaultTimeout(15_000);
    try {
      await page.setViewportSize({ width: 1280, height: 860 });
      await page.goto(`${site.url}/auth/github?login=demo-builder&returnTo=%2Finstruments`);
      await page.getByRole('heading', { name: 'Instruments', level: 1 }).waitFor();
      const table = page.getByRole('table', { name: 'Your instruments' });
      await table.getByText('0–1 in outside micrometer', { exact: true }).first().waitFor();
      // The seed keeps one of Ines's instruments past its due date on purpose.
      await expect(table.locator('[data-calibration="overdue"]').count()).resolves.toBeGreaterThan(0);
      await page.getByText(/past the calibration due date/).first().waitFor();

      const name = `Browser check micrometer ${run}`;
      await page.getByRole('button', { name: 'Add an instrument' }).click();
      const dialog = page.getByRole('dialog', { name: 'Add an instrument' });
      await dialog.getByLabel('Name').fill(name);
      await dialog.getByLabel('Kind').selectOption('outside-micrometer');
      await dialog.getByLabel('Serial').fill(`BC-${run}`);
      await dialog.getByLabel('Unit').selectOption('in');
      const resolution = dialog.getByLabel('Resolution (in)');

      // Millimetres typed into an inch record: refused as typed, beside the field, naming the unit.
      await resolution.fill('0.001 mm');
      await dialog.getByText("enter it in in (this record's unit), or leave the unit off").waitFor();
      await expect(resolution.getAttribute('aria-invalid')).resolves.toBe('true');
      // A resolution of nothing: refused by the shared schema on submit, and nothing is sent.
      await resolution.fill('0');
      await dialog.getByRole('button', { name: 'Add instrument' }).click();
      await dialog.getByText('resolution must be greater than 0').waitFor();
      expect(await Instrument.count({ where: { name } })).toBe(0);
      await page.screenshot({ path: shot('add-instrument-refused-1280') });

      await resolution.fill('0.0001');
      // JCGM 100:2008 (GUM) F.2.2.1: u = δx/(2√3) = 0.0001 in / 3.4641 = 0.0000289 in; two significant digits (GUM 7.2.6).
      await expect(dialog.getByTestId('default-uncertainty').textContent()).resolves.toContain('= 0.000029 in');
      await dialog.getByLabel('Last calibrated on').fill('2025-01-10');
      await dialog.getByLabel('Interval (days)').fill('365');
      await dialog.getByLabel('Calibrated by').fill('Invented test lab');
      await page.screenshot({ path: shot('add-instrument-1280') });
      await dialog.getByRole('button', { name: 'Add instrument' }).click();
      await dialog.waitFor({ state: 'detached' });

      const row = table.getByRole('row').filter({ hasText: name });
      // Other tests add instruments to the same demo builder: the new one may be on a later page.
      const loadMore = page.getByRole('button', { name: 'Load more' });
      while ((await row.count()) === 0 && (await loadMore.count()) > 0) {
        await loadMore.click();
        await page.waitForTimeout(200);
      }
      await row.waitFor();
      await expect(row.getByText('from resolution').count()).resolves.toBe(1);
      // 2025-01-10 + 365 days = 2026-01-10 (2025 is not a leap year); today (2026-12-02) is after it.
      await row.locator('[data-calibration="overdue"]').waitFor();
      await row.getByText('Readings taken with it after 2026-01-10 carry a calibration warning.').waitFor();

      await row.getByRole('button', { name: `Log a zero check for ${name}` }).click();
      const zero = page.getByRole('dialog', { name: 'Log a zero check' });
      await zero.getByLabel('Setting standard (in)').fill('1.0000');
      await zero.getByLabel('It showed (in)').fill('1.0002');
      // Offset = shown − standard: 1.0002 in − 1.0000 in = +0.0002 in.
      await expect(zero.getByTestId('zero-offset').textContent()).resolves.toContain('shown − standard = +0.0002 in');
      await page.screenshot({ path: shot('zero-check-1280') });
      await zero.getByRole('button', { name: 'Log zero check' }).click();
      await zero.waitFor({ state: 'detached' });
      await row.getByText('+0.0002 in').waitFor();

      const stored = await Instrument.findOne({ where: { name } });
      expect(stored?.resolution).toBe('0.0001');
      const check = await ZeroCheck.findOne({ where: { instrumentId: stored!.id } });
      expect([check?.standardSize, check?.shown]).toEqual(['1.0000', '1.0002']);

      // The confirmations arrive as toasts (their viewport loads with the first one), in the
      // notifications region, announced and dismissable.
      const region = page.getByRole('region', { name: /Notifications/ });
      await region.getByText('Instrument added').waitFor();
      await expect(region.getByRole('button', { name: 'Dismiss notification' }).count()).resolves.toBeGreaterThan(0);
      await dismissToasts(page);
      await page.screenshot({ path: shot('instruments-1280'), fullPage: true });
      await page.setViewportSize({ width: 390, height: 844 });
      await page.getByRole('list', { name: 'Your instruments' }).getByText(name).waitFor();
      await page.screenshot({ path: shot('instruments-390'), fullPage: true });
      await page.screenshot({ path: shot('instruments-390-top') });
      await page.setViewportSize({ width: 1280, height: 860 });

      // Another tab saves the instrument while this one has it open: the save is refused and nothing is merged.
      await row.getByRole('button', { name: `Actions for ${name}` }).click();
      await page.getByRole('menuitem', { name: 'Edit' }).click();
      const edit = page.getByRole('dialog', { name: `Edit ${name}` });
      await edit.getByRole('textbox', { name: /^Name/ }).waitFor();
      const elsewhere = await page.evaluate(async ({ id, lockVersion }) => {
        const { token } = await (await fetch('/api/csrf-token')).json();
        const res = await fetch(`/api/instruments/${id}`, {
          method: 'PATCH',
          headers: { 'Content-Type': 'application/json', 'x-csrf-token': token },
          body: JSON.stringify({ note: 'Saved in another tab', lockVersion }),
        });
        return res.status;
      }, { id: stored!.id, lockVersion: stored!.lockVersion });
      expect(elsewhere).toBe(200);
      await edit.getByLabel('Calibrated by').fill('Changed in the first tab');
      await edit.getByRole('button', { name: 'Save changes' }).click();
      await edit.getByText('Saved elsewhere since you opened it').waitFor();
      await expect(Instrument.findByPk(stored!.id).then((i) => i?.calibratedBy)).resolves.toBe('Invented test lab');
      await edit.getByRole('button', { name: 'Load the saved version' }).click();
      await edit.getByText('Saved elsewhere since you opened it').waitFor({ state: 'detached' });
      await expect(edit.getByLabel('Note').inputValue()).resolves.toBe('Saved in another tab');
      await edit.getByLabel('Calibrated by').fill('Changed in the first tab');
      await edit.getByRole('button', { name: 'Save changes' }).click();
      await edit.waitFor({ state: 'detached' });
      await row.getByText('by Changed in the first tab').waitFor();

      // Zero checks use it, so it cannot be deleted; retiring it keeps it with them.
      await row.getByRole('button', { name: `Actions for ${name}` }).click();
      await page.getByRole('menuitem', { name: 'Delete…' }).click();
      await page.getByRole('alertdialog').or(page.getByRole('dialog')).getByRole('button', { name: 'Delete instrument' }).click();
      await page.getByRole('heading', { name: `${name} is in use` }).waitFor();
      await page.getByRole('button', { name: 'Retire it' }).click();
      await row.waitFor({ state: 'detached' });
      // The row leaves with the answer; the stored flag is read until it shows, not at once.
      await expect.poll(async () => (await Instrument.findByPk(stored!.id))?.retired).toBe(true);
      // Other test files share the demo builder, so the count may include their retired instruments.
      await page.getByLabel(/^Show retired instruments \(\d+\)$/).check();
      await table.getByRole('row').filter({ hasText: name }).getByText('Retired').waitFor();
    } finally {
      await page.close();
    }
  }, 120_000);

  it('searches the library, is refused a reject limit inside the band, creates a spec and adds version 2', async () => {
    await browser.clearCookies();
    const page = await browser.newPage();
    page.setDefaultTimeout(15_000);
    try {
      await page.setViewportSize({ width: 1280, height: 860 });
      await page.goto(`${site.url}/auth/github?login=demo-builder&returnTo=%2Fspecs`);
      await page.getByRole('heading', { name: 'Spec library', level: 1 }).waitFor();
      const table = page.getByRole('table', { name: 'Specs in the library' });
      await table.getByText('Vellum 1100 oil pump rotor end float').first().waitFor();
      // Starter specs say their figures are invented for the demo.
      await expect(table.getByText('demo figures').count()).resolves.toBeGreaterThan(0);
      await page.screenshot({ path: shot('specs-1280'), fullPage: true });

      const name = `Browser check crank end float ${run}`;
      await page.getByRole('button', { name: 'New spec' }).click();
      const dialog = page.getByRole('dialog', { name: 'New spec' });
      await dialog.getByRole('textbox', { name: /^Name/ }).fill(name);
      await dialog.getByLabel('Applies to').fill('Invented test engine');
      await dialog.getByLabel('Share it in the library').check();
      await dialog.getByLabel('Band from (in)').fill('0.0040');
      await dialog.getByLabel('Band to (in)').fill('0.0080');
      await dialog.getByLabel('Preferred from (in)').fill('0.0050');
      await dialog.getByLabel('Preferred to (in)').fill('0.0070');
      await dialog.getByLabel('Reject limit (in)').fill('0.0060');
      await dialog.getByLabel('Where the figures come from').fill('Invented figures for the browser check');
      await dialog.getByRole('button', { name: 'Create spec' }).click();
      // The engine's spec rule, through the shared schema, beside the reject box.
      await dialog.getByText('reject must lie outside the band: at or above max, or at or below min').waitFor();
      expect(await Spec.count({ where: { name } })).toBe(0);
      await dialog.getByLabel('Reject limit (in)').scrollIntoViewIfNeeded();
      await page.screenshot({ path: shot('new-spec-refused-1280') });

      await dialog.getByLabel('Reject limit (in)').fill('0.0100');
      await dialog.locator('[data-band-picture]').waitFor();
      await dialog.getByRole('button', { name: 'Create spec' }).click();
      await page.getByRole('heading', { name, level: 1 }).waitFor();

      await page.getByRole('link', { name: '← Spec library' }).click();
      await page.getByLabel('Search specs').fill('browser check crank');
      await page.waitForURL(/q=browser/);
      await table.getByRole('link', { name }).waitFor();
      await expect(table.getByText('Vellum 1100 oil pump rotor end float').count()).resolves.toBe(0);
      await table.getByText('0.0040–0.0080 in, preferred 0.0050–0.0070, reject above 0.0100').waitFor();
      await table.getByRole('link', { name }).click();

      await page.getByRole('heading', { name, level: 1 }).waitFor();
      await page.getByText(/Figures here are what the builder entered and cite; check them against the manufacturer’s figures before you rely on them\./).waitFor();
      await page.getByRole('button', { name: 'New version' }).click();
      const form = page.getByRole('region', { name: 'New version (2)' });
      // Prefilled from the latest version.
      await expect(form.getByLabel('Band to (in)').inputValue()).resolves.toBe('0.0080');
      await form.getByLabel('Band to (in)').fill('0.0075');
      await form.getByLabel('Note').fill('Tightened after a second reading of the invented manual.');
      await form.getByRole('button', { name: 'Save as version 2' }).click();
      await form.waitFor({ state: 'detached' });

      const versions = page.locator('[data-spec-version]');
      await page.locator('[data-spec-version="2"]').waitFor();
      await expect(versions.first().getAttribute('data-spec-version')).resolves.toBe('2');
      await expect(versions.count()).resolves.toBe(2);
      await page.locator('[data-spec-version="2"]').getByText('latest').waitFor();
      await page.locator('[data-spec-version="2"]').getByText('0.0040–0.0075 in, preferred 0.0050–0.0070, reject above 0.0100').waitFor();
      await expect(page.locator('[data-spec-version] [data-band-picture]').count()).resolves.toBe(2);

      const spec = await Spec.findOne({ where: { name } });
      const stored = await SpecVersion.findAll({ where: { specId: spec!.id }, order: [['version', 'ASC']] });
      expect(stored.map((v) => [v.version, v.maxValue])).toEqual([
        [1, '0.0080'],
        [2, '0.0075'],
      ]);
      await dismissToasts(page);
      await page.screenshot({ path: shot('spec-1280'), fullPage: true });
      await page.setViewportSize({ width: 390, height: 844 });
      await page.screenshot({ path: shot('spec-390'), fullPage: true });
    } finally {
      await page.close();
    }
  }, 120_000);

  it('still sees the measured value, its bar and verdict in the calculator’s band picture', async () => {
    const page = await browser.newPage();
    page.setDefaultTimeout(15_000);
    try {
      await page.setViewportSize({ width: 1280, height: 860 });
      await page.goto(`${site.url}/calculator`);
      await page.getByRole('button', { name: 'End float: bore depth − component height' }).click();
      const picture = page.locator('[data-band-picture]');
      await picture.waitFor();
      await expect(picture.locator('desc').textContent()).resolves.toMatch(/^Measured .+ by the (guarded|simple) rule\.$/);
      await picture.getByText(/Bar: value ± U/).waitFor();
      await picture.scrollIntoViewIfNeeded();
      await page.screenshot({ path: shot('calculator-band-1280') });
    } finally {
      await page.close();
    }
  }, 60_000);
});
