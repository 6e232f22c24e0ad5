import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import type { Page } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { launchBrowser } from '../../scripts/lib/chromium';
import { repoRoot } from '../../scripts/lib/bootstrap';
import { Instrument } from '../../server/features/instruments/instrument.model';
import { Story } from '../../server/features/stories/story.model';
import { User } from '../../server/features/users/user.model';
import { startBrowserApp } from '../support/browser-app';
import { makeTestClip } from '../support/clips';

/*
 * Journey 1, the builder's day, through the screens only: sign in through the fake provider,
 * create a build, upload a generated clip and wait for it, mark moments and log a depth, a
 * height and a feeler bracket there, define an end float from the template against a spec
 * from the library, write a diary entry with two claims, and send it for review. The
 * moderators get the mail. The instruments and the spec are the seeded demo library (invented).
 */

let site: Awaited<ReturnType<typeof startBrowserApp>>;
let browser: Awaited<ReturnType<typeof launchBrowser>>;
let work: string;
const artifacts = path.join(repoRoot, 'tests/artifacts');

beforeAll(async () => {
  work = fs.mkdtempSync(path.join(os.tmpdir(), 'benchproof-journey-builder-'));
  site = await startBrowserApp({ jobs: true, mail: true });
  browser = await launchBrowser();
  fs.mkdirSync(artifacts, { recursive: true });
}, 240_000);
afterAll(async () => {
  await browser?.dispose();
  await site?.close();
  fs.rmSync(work, { recursive: true, force: true });
});

async function instrumentId(serial: string): Promise<string> {
  const owner = await User.findOne({ where: { login: 'demo-builder' } });
  const found = await Instrument.findOne({ where: { ownerId: owner!.id, serial } });
  if (!found) throw new Error(`the demo library has no instrument ${serial}`);
  return String(found.id);
}

async function logReading(page: Page, fill: (form: ReturnType<Page['locator']>) => Promise<void>, key: string) {
  const form = page.locator('[data-reading-form]');
  await page.getByRole('button', { name: 'Log a reading', exact: true }).click();
  await form.locator('img[alt^="Evidence still at"]').waitFor();
  await fill(form);
  await form.getByRole('button', { name: 'Save reading' }).click();
  await form.waitFor({ state: 'detached' });
  await page.locator(`[data-reading-row="${key}"]`).waitFor();
}

describe('journey 1: a builder at the bench, from clip to a story sent for review', () => {
  it('builds, films, logs, computes, writes two claims and submits; the moderators are told by e-mail', async () => {
    const run = Date.now().toString(36);
    const clip = await makeTestClip({ seconds: 6, format: 'mp4-h264', dir: work, name: 'journey-pump' });
    const [depthMic, outsideMic, blades] = (await Promise.all(['MV-DM-02', 'MV-OM-01', 'MV-FB-03'].map(instrumentId))) as [string, string, string];
    await browser.clearCookies();
    const page = await browser.newPage();
    page.setDefaultTimeout(20_000);
    await page.setViewportSize({ width: 1280, height: 900 });
    try {
      // Sign in through the fake provider and create the build.
      await page.goto(`${site.url}/sign-in`);
      await page.goto(`${site.url}/auth/github?login=demo-builder&returnTo=%2Fbuilds%2Fnew`);
      await page.getByRole('heading', { name: 'New build' }).waitFor();
      const title = `Journey pump ${run} (test)`;
      await page.getByLabel('Title').fill(title);
      await page.getByLabel('What is being built').fill('An invented rotor oil pump for the journey test');
      await page.getByRole('button', { name: 'Add a part' }).click();
      await page.getByLabel('Part 1', { exact: true }).fill('Oil pump');
      await page.getByLabel('Serial of part 1').fill(`JP-${run}`);
      await page.getByRole('button', { name: 'Create build' }).click();
      await page.getByRole('heading', { name: title }).waitFor();
      const buildId = Number(/\/builds\/(\d+)/.exec(page.url())?.[1]);

      // Upload a generated clip and wait until it is ready.
      await page.locator('input[type=file]').setInputFiles([clip]);
      await page.locator('ol[aria-label="Clips in timeline order"] >> text=Ready').first().waitFor({ timeout: 90_000 });
      await page.waitForFunction(() => (document.querySelector('video')?.readyState ?? 0) >= 1);

      // Two moments with readings (depth at 1 s, height at 2 s) and a feeler bracket at 3 s.
      await page.getByRole('button', { name: 'Forward 1 second' }).click();
      await logReading(
        page,
        async (form) => {
          await form.getByLabel('Name').fill('Body depth');
          await form.getByLabel('Instrument').selectOption(depthMic);
          await form.getByLabel('Value as shown').fill('0.5642');
          await form.getByText('reads as 0.5642 in').waitFor();
        },
        'body-depth',
      );
      await page.getByRole('button', { name: 'Forward 1 second' }).click();
      await logReading(
        page,
        async (form) => {
          await form.getByLabel('Name').fill('Rotor height');
          await form.getByLabel('Instrument').selectOption(outsideMic);
          await form.getByLabel('Value as shown').fill('0.5615 in');
        },
        'rotor-height',
      );
      await page.getByRole('button', { name: 'Forward 1 second' }).click();
      await logReading(
        page,
        async (form) => {
          await form.getByLabel('Name').fill('Outer rotor to body');
          await form.getByLabel('Instrument').selectOption(blades);
          await form.getByLabel('Thickest blade that enters').fill('0.003');
          await form.getByLabel('Thinnest blade that does not').fill('0.004');
        },
        'outer-rotor-to-body',
      );
      const moments = await page.evaluate(async (id) => (await (await fetch(`/api/builds/${id}/readings`)).json()) as { items: { momentId: number }[] }, buildId);
      expect(new Set(moments.items.map((r) => r.momentId)).size).toBe(3);

      // End float from the template, judged against the demo library's spec.
      await page.getByRole('button', { name: 'New result' }).click();
      const clearanceForm = page.getByRole('form', { name: 'New result' });
      const ids = await page.evaluate(async (id) => (await (await fetch(`/api/builds/${id}/readings`)).json()) as { items: { id: number; key: string }[] }, buildId);
      const idOf = (key: string) => String(ids.items.find((r) => r.key === key)!.id);
      await clearanceForm.getByLabel('Bore depth', { exact: true }).selectOption(idOf('body-depth'));
      await clearanceForm.getByLabel('Rotor height', { exact: true }).selectOption(idOf('rotor-height'));
      await clearanceForm.getByLabel('Search the spec library').fill('Vellum 1100 oil pump rotor end float');
      await clearanceForm.getByRole('button', { name: 'Use Vellum 1100 oil pump rotor end float' }).first().click();
      // 0.5642 − 0.5615 = 0.0027 in, inside 0.0015–0.0040 in (invented demo spec) by the guarded rule.
      const verdict = clearanceForm.locator('[data-clearance-result] [data-verdict]').first();
      await expect.poll(() => verdict.getAttribute('data-verdict')).toBe('conforms');
      await clearanceForm.getByRole('button', { name: 'Save result' }).click();
      await page.locator('[data-clearance]').first().waitFor();
      const clearances = await page.evaluate(async (id) => (await (await fetch(`/api/builds/${id}/clearances`)).json()) as { items: { key: string }[] }, buildId);
      const clearanceKey = clearances.items[0]!.key;

      // A diary entry with two claims, sent for review.
      await page.goto(`${site.url}/builds/${buildId}/stories`);
      await page.getByRole('button', { name: 'New story' }).click();
      await page.getByRole('dialog').getByLabel('Title').fill(`Pump measured (journey ${run})`);
      await page.getByRole('button', { name: 'Create and open the editor' }).click();
      await page.getByRole('heading', { name: 'Edit story' }).waitFor();
      const storyId = Number(/\/stories\/(\d+)\/edit/.exec(page.url())?.[1]);
      const text = page.getByLabel('Text (Markdown)');
      await text.click();
      await page.keyboard.insertText(
        `Measured the pump before anything else. [End float is 2.7 thou](clearance:${clearanceKey}), and [the outer rotor sits 3.5 thou from the body](reading:outer-rotor-to-body).`,
      );
      await page.locator('[data-save-state="saved"]').waitFor({ timeout: 20_000 });
      const preview = page.locator('a.claim');
      await expect.poll(() => preview.count()).toBe(2);
      expect(await preview.evaluateAll((links) => links.map((a) => a.getAttribute('data-claim-state')))).toEqual(['ok', 'ok']);

      await page.getByRole('button', { name: 'Send for review' }).click();
      const confirm = page.getByRole('dialog');
      if (await confirm.count()) await confirm.getByRole('button', { name: 'Send for review' }).click();
      await expect.poll(async () => (await Story.findByPk(storyId))!.state).toBe('in-review');
      await page.screenshot({ path: path.join(artifacts, 'journey-builder-last.png'), fullPage: false });

      // Every moderator is told.
      const moderator = await User.findOne({ where: { login: 'demo-moderator' } });
      const [mail] = await site.smtp.waitFor((m) => m.to.includes(moderator!.email!) && m.text.includes(`/review/stories/${storyId}`), 1, 30_000);
      expect(mail!.html).toContain(`/review/stories/${storyId}`);
    } finally {
      await page.close();
    }
  }, 240_000);
});
