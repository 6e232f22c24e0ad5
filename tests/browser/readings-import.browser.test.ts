import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { launchBrowser } from '../../scripts/lib/chromium';
import { startBrowserApp } from '../support/browser-app';
import { makeTestClip } from '../support/clips';
import { api } from '../support/page-api';

/*
 * Importing readings from a CSV file in the builder's workspace: the preview shows a refused row
 * first with what to fix, nothing can be imported until it is fixed, and a clean file is logged
 * at once. Figures invented. Screenshots go to /tmp/import-*.png.
 */

let site: Awaited<ReturnType<typeof startBrowserApp>>;
let browser: Awaited<ReturnType<typeof launchBrowser>>;
let work: string;
const shot = (name: string) => `/tmp/import-${name}.png`;

beforeAll(async () => {
  work = fs.mkdtempSync(path.join(os.tmpdir(), 'benchproof-browser-import-'));
  site = await startBrowserApp({ jobs: true });
  browser = await launchBrowser();
}, 240_000);
afterAll(async () => {
  await browser?.dispose();
  await site?.close();
  fs.rmSync(work, { recursive: true, force: true });
});

const csvFile = (name: string, lines: string[]) => ({ name, mimeType: 'text/csv', buffer: Buffer.from(`\uFEFF${lines.join('\r\n')}\r\n`) });

describe('importing readings from a CSV file', () => {
  it('previews a logger’s sheet, refuses a row it cannot log, and imports the corrected file in one go', async () => {
    const clip = await makeTestClip({ seconds: 3, format: 'mp4-h264', dir: work, name: 'pump-session' });
    await browser.clearCookies();
    const page = await browser.newPage();
    await page.setViewportSize({ width: 1280, height: 900 });
    page.setDefaultTimeout(15_000);
    try {
      await page.goto(`${site.url}/auth/github?login=demo-builder&returnTo=%2Finstruments`);
      await page.getByRole('heading', { name: 'Instruments', level: 1 }).waitFor();
      const build = await api<{ build: { id: number } }>(page, 'POST', '/api/builds', { title: 'Invented pump, imported readings (test)', parts: [{ name: 'Oil pump' }] });
      expect(build.status).toBe(201);
      const created = await api(page, 'POST', '/api/instruments', {
        name: 'Import browser test micrometer 0–1 in',
        kind: 'outside-micrometer',
        serial: 'TO-01',
        unit: 'in',
        resolution: '0.0001',
        lastCalibratedOn: '2026-01-05',
        calibrationIntervalDays: 3650,
        calibratedBy: 'invented test lab',
      });
      expect(created.status).toBe(201);

      await page.goto(`${site.url}/builds/${build.json.build.id}`);
      await page.locator('input[type=file]').first().setInputFiles([clip]);
      await page.locator('ol[aria-label="Clips in timeline order"] >> text=Ready').first().waitFor({ timeout: 90_000 });

      await page.getByRole('button', { name: 'Import from CSV…' }).click();
      const dialog = page.getByRole('dialog', { name: 'Import readings from a CSV file' });
      const sheet = (gauge2: string) =>
        csvFile('logger.csv', [
          'What,Reading,Gauge,Time,Date',
          'Bore depth,0.5642,Import browser test micrometer 0–1 in,0:00.8,2026-11-20',
          `Rotor height,0.5595,${gauge2},1.6,2026-11-20`,
          'Rotor height again,559.6 thou,Import browser test micrometer 0–1 in,1.6,2026-11-20',
        ]);
      await dialog.getByLabel('CSV file').setInputFiles(sheet('Borrowed micrometer'));
      const counts = dialog.getByTestId('reading-import-counts');
      await counts.waitFor();
      // No column is called "name": every row is refused until the "What" column is chosen for it.
      await expect(counts.textContent()).resolves.toContain('3 rows refused');
      await dialog.getByLabel('Name', { exact: true }).selectOption('What');
      await expect.poll(() => counts.textContent()).toContain('1 row refused');
      const refused = dialog.locator('tr[data-status="refused"]');
      await expect(refused.count()).resolves.toBe(1);
      // Refused rows come first, saying what to do.
      await expect(dialog.locator('tbody tr').first().getAttribute('data-status')).resolves.toBe('refused');
      // The builder's instruments are named after it (other test files add theirs to the same account, so only its start is fixed).
      await expect(dialog.locator('tr[data-problems-of="3"]').textContent()).resolves.toMatch(/line 3: no instrument named "Borrowed micrometer"; your instruments are "[^"]+"/);
      await expect(dialog.getByRole('button', { name: /^Import/ }).isDisabled()).resolves.toBe(true);
      await page.screenshot({ path: shot('refused-1280') });

      // The corrected file: all three are new, and the button says how many.
      await dialog.getByLabel('CSV file').setInputFiles(sheet('Import browser test micrometer 0–1 in'));
      await expect.poll(() => counts.textContent()).toContain('3 rows refused');
      await dialog.getByLabel('Name', { exact: true }).selectOption('What');
      await expect.poll(() => counts.textContent()).toContain('0 rows refused');
      await expect(dialog.locator('tr[data-status="new"]').count()).resolves.toBe(3);
      await page.screenshot({ path: shot('ready-1280') });
      await dialog.getByRole('button', { name: 'Import 3 readings' }).click();
      await dialog.waitFor({ state: 'detached' });
      await page.getByText('Done: 3 readings imported', { exact: true }).waitFor();
      const readings = await api<{ items: { key: string; value: string; unit: string }[] }>(page, 'GET', `/api/builds/${build.json.build.id}/readings`);
      expect(readings.json.items.map((r) => [r.key, r.value, r.unit])).toEqual([
        ['bore-depth', '0.5642', 'in'],
        ['rotor-height', '0.5595', 'in'],
        ['rotor-height-again', '559.6', 'thou'],
      ]);
      await page.locator('#readings').getByText('Rotor height again').first().waitFor();
    } finally {
      await page.close();
    }
  }, 240_000);
});
