import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import type { Page } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { clearanceListResponseSchema } from '@shared/clearances/clearance.schema';
import { readingResponseSchema, type Reading } from '@shared/readings/reading.schema';
import { launchBrowser } from '../../scripts/lib/chromium';
import { startBrowserApp } from '../support/browser-app';
import { makeTestClip } from '../support/clips';
import { sessionFor, uploadClip, waitUntilReady, type Session } from '../support/matrix-fixtures';

/*
 * Results of other quantities in the workspace: a static compression ratio from its formula
 * template over cc'd volumes and lengths, judged against a ratio spec, then edited; and a formula
 * typed by hand that adds a length to a volume, refused beside the box in the engine's words.
 *
 * The figures are invented. The ratio is the template's geometry (π/4·d²·h per cylinder) with
 * 1 in³ = 16.387064 cm³ exactly (NIST SP 811 (2008) B.8): swept π/4·4.000²·3.480 in³ = 716.64 cc;
 * clearance volume 64.2 (chamber) + 8.871 (gasket, π/4·4.100²·0.041 in³) + 2.059 (deck,
 * π/4·4.000²·0.010 in³) + 5.0 (dish) = 80.130 cc; (716.64 + 80.130) / 80.130 = 9.943. With the
 * 66.0 cc chamber: (716.64 + 81.930) / 81.930 = 9.747.
 */

let site: Awaited<ReturnType<typeof startBrowserApp>>;
let browser: Awaited<ReturnType<typeof launchBrowser>>;
let work: string;
let owner: Session;
let buildId: number;
const readings: Record<string, Reading> = {};
const TITLE = 'Invented 4.000 in bore V8, compression check (test)';
const SPEC = 'Static compression ratio, invented pump gas build (test)';
const shot = (name: string) => `/tmp/results-${name}.png`;

const send = (url: string, body: object) => owner.agent.post(url).set('x-csrf-token', owner.token).send(body);

async function created<T>(res: { status: number; body: unknown }, pick: (body: never) => T): Promise<T> {
  if (res.status !== 201) throw new Error(`answered ${res.status}: ${JSON.stringify(res.body)}`);
  return pick(res.body as never);
}

beforeAll(async () => {
  work = fs.mkdtempSync(path.join(os.tmpdir(), 'benchproof-browser-results-'));
  site = await startBrowserApp({ jobs: true });
  browser = await launchBrowser();
  owner = await sessionFor(site, 'owner');

  buildId = await created(await send('/api/builds', { title: TITLE, subject: 'an invented engine, for tests', parts: [{ name: 'Cylinder head (invented)', serial: 'TH-0101' }] }), (b: { build: { id: number } }) => b.build.id);
  const clipId = await uploadClip(owner, buildId, await makeTestClip({ seconds: 4, format: 'mp4-h264', dir: work, name: 'cc-chamber' }));
  await waitUntilReady(owner, clipId);
  const moment = async (atMs: number, label: string) => created(await send(`/api/clips/${clipId}/moments`, { atMs, label }), (b: { moment: { id: number } }) => b.moment.id);
  const atCc = await moment(800, 'Burette over the chamber');
  const atMic = await moment(2000, 'Micrometer on the gasket');

  const calibrated = { lastCalibratedOn: '2026-01-05', calibrationIntervalDays: 3650, serial: 'INV-TEST' };
  const instrument = async (body: object) => created(await send('/api/instruments', { ...calibrated, ...body }), (b: { instrument: { id: number } }) => b.instrument.id);
  const burette = await instrument({ name: 'Burette 100 cc (test)', kind: 'burette', unit: 'cc', resolution: '0.1' });
  const mic = await instrument({ name: 'Outside micrometer 0–1 in (test)', kind: 'outside-micrometer', unit: 'in', resolution: '0.0001' });
  const bore = await instrument({ name: 'Dial bore gauge 2–6 in (test)', kind: 'dial-bore-gauge', unit: 'in', resolution: '0.0001' });

  const reading = async (key: string, name: string, instrumentId: number, value: string, momentId: number) => {
    const r = await created(await send(`/api/builds/${buildId}/readings`, { momentId, instrumentId, key, name, kind: 'direct', value, takenOn: '2026-11-20' }), (b: unknown) => readingResponseSchema.parse(b).reading);
    readings[key] = r;
  };
  await reading('bore', 'Bore, cylinder 1', bore, '4.000', atMic);
  await reading('stroke', 'Stroke', mic, '3.480', atMic);
  await reading('chamber-1', 'Chamber, head 1', burette, '64.2', atCc);
  await reading('chamber-2', 'Chamber, head 2', burette, '66.0', atCc);
  await reading('gasket-bore', 'Gasket bore', bore, '4.100', atMic);
  await reading('gasket-thickness', 'Gasket thickness', mic, '0.041', atMic);
  await reading('deck-height', 'Deck height, cylinder 1', mic, '0.010', atMic);
  await reading('dish', 'Piston dish', burette, '5.0', atCc);

  const spec = await send('/api/specs', {
    name: SPEC,
    appliesTo: 'invented V8 on pump gas',
    unit: '1',
    min: '9.8',
    max: '10.6',
    rule: 'guarded',
    source: { kind: 'common-practice', text: 'Invented for this test; not from any manual' },
  });
  expect(spec.status).toBe(201);
}, 240_000);

afterAll(async () => {
  await browser?.dispose();
  await site?.close();
  fs.rmSync(work, { recursive: true, force: true });
});

async function dismissToasts(page: Page) {
  const close = page.getByRole('button', { name: 'Dismiss notification' });
  while ((await close.count()) > 0) await close.first().click();
}

/** No sideways scroll of the whole page. */
const pageScrollsSideways = (page: Page) => page.evaluate(() => document.documentElement.scrollWidth > document.documentElement.clientWidth);

describe('results of any quantity in the workspace', () => {
  it('works out a compression ratio from its template over cc readings, judges it against a ratio spec, and edits it', async () => {
    await browser.clearCookies();
    const page = await browser.newPage();
    page.setDefaultTimeout(15_000);
    try {
      await page.setViewportSize({ width: 1280, height: 900 });
      await page.goto(`${site.url}/auth/github?login=demo-builder&returnTo=${encodeURIComponent(`/builds/${buildId}`)}`);
      await page.getByRole('heading', { name: TITLE }).waitFor();
      await page.getByRole('button', { name: 'New result' }).click();
      const form = page.getByRole('form', { name: 'New result' });
      await form.getByLabel('Static compression ratio', { exact: true }).check();
      await form.getByText('Volume above the piston at bottom dead centre over the volume at top dead centre', { exact: false }).waitFor();
      // The template's formula is shown as written, over its slots' names.
      await form.locator('[data-template-formula]').getByText('pi/4*bore^2*stroke + chamber', { exact: false }).waitFor();

      // A slot lists readings of its own quantity only: the chamber takes volumes, the bore lengths.
      const chamberSlot = form.locator('[data-slot="chamber"] select');
      const chamberOptions = await chamberSlot.locator('option').allTextContents();
      expect(chamberOptions.slice(1).map((o) => o.split(' · ')[1])).toEqual(['chamber-1', 'chamber-2', 'dish']);
      const boreOptions = await form.locator('[data-slot="bore"] select option').allTextContents();
      expect(boreOptions.some((o) => o.includes('chamber'))).toBe(false);
      // The slot is labelled with its label and its hint.
      await form.getByText('Combustion chamber in the head, cc’d.', { exact: false }).waitFor();

      const pick = (slot: string, key: string) => form.locator(`[data-slot="${slot}"] select`).selectOption(String(readings[key]!.id));
      await pick('bore', 'bore');
      await pick('stroke', 'stroke');
      await pick('chamber', 'chamber-1');
      await pick('gasket-bore', 'gasket-bore');
      await pick('gasket-thickness', 'gasket-thickness');
      await pick('deck-height', 'deck-height');
      await form.locator('[data-live-waiting]').getByText('Pick the dish volume reading', { exact: false }).waitFor();
      await pick('dish', 'dish');

      // The ratio has no unit: "9.943 ± 0.009…" and nothing after the number.
      const display = form.locator('[data-clearance-result] [data-result-display]');
      await expect.poll(() => display.textContent()).toMatch(/^9\.94\d* ± 0\.0\d+ \(95 %, k = [\d.]+\)$/);
      expect(await form.locator('[data-clearance-result]').getAttribute('data-quantity')).toBe('ratio');
      // A ratio has no unit to choose.
      await form.getByText('State the result in: no unit (a ratio)').waitFor();
      expect(await form.getByLabel('State the result in').count()).toBe(0);

      await form.getByLabel('Search the spec library').fill('compression ratio');
      await form.getByRole('button', { name: `Use ${SPEC}` }).click();
      await form.locator('[data-spec-picker]').getByText('9.8–10.6 · guarded rule', { exact: true }).waitFor();
      // Guarded rule (ISO 14253-1): 9.8 + U ≤ 9.943 ≤ 10.6 − U, so within spec.
      const verdict = form.locator('[data-clearance-result] [data-verdict]').first();
      await expect.poll(() => verdict.getAttribute('data-verdict')).toBe('conforms');
      // The band picture in the ratio's own scale, and the interval and probability in its unit.
      await form.locator('[data-band-picture] svg').waitFor();
      expect(await form.locator('[data-band-picture] desc').textContent()).toContain('spec from 9.8');
      expect(await form.locator('[data-clearance-result] [data-interval]').innerText()).toMatch(/^95 % interval 9\.9\d+ to 9\.9\d+ \(/);
      await form.locator('[data-clearance-result] [data-probability-within]').waitFor();
      await dismissToasts(page);
      await form.screenshot({ path: shot('form-ratio-1280'), animations: 'disabled' });

      await form.getByRole('button', { name: 'Save result' }).click();
      const saved = page.locator('[data-clearance="static-compression-ratio"]');
      await saved.waitFor();
      expect(await saved.locator('[data-model]').textContent()).toContain('pi/4*bore^2*stroke');
      expect(await saved.locator('[data-formula-legend]').textContent()).toContain('chamber is Chamber, head 1 (chamber-1)');
      expect(await saved.locator('[data-verdict]').first().getAttribute('data-verdict')).toBe('conforms');
      expect(await saved.textContent()).toMatch(/9\.94\d* ± 0\.0\d+ \(95 %/);

      // What the server stored is what the form showed.
      const list = clearanceListResponseSchema.parse((await owner.agent.get(`/api/builds/${buildId}/clearances`)).body);
      const stored = list.items.find((c) => c.key === 'static-compression-ratio')!;
      expect(stored.template).toBe('compression-ratio');
      expect(stored.result?.quantity).toBe('ratio');
      expect(stored.terms.find((t) => t.symbol === 'chamber')?.readingId).toBe(readings['chamber-1']!.id);
      const shown = await display.count();
      expect(shown).toBe(0);

      // Edit: the template and each slot come back; the other head's chamber changes the figure.
      await page.getByRole('button', { name: 'Edit Static compression ratio' }).click();
      const edit = page.getByRole('form', { name: 'Edit result Static compression ratio' });
      await expect(edit.getByLabel('Static compression ratio', { exact: true }).isChecked()).resolves.toBe(true);
      await expect(edit.locator('[data-slot="dish"] select').inputValue()).resolves.toBe(String(readings.dish!.id));
      await expect.poll(() => edit.locator('[data-result-display]').textContent()).toMatch(/^9\.94/);
      await edit.locator('[data-slot="chamber"] select').selectOption(String(readings['chamber-2']!.id));
      await expect.poll(() => edit.locator('[data-result-display]').textContent()).toMatch(/^9\.74\d* ± /);
      // 9.747 is under 9.8: out of spec.
      await expect.poll(() => edit.locator('[data-clearance-result] [data-verdict]').first().getAttribute('data-verdict')).toBe('does-not-conform');
      await edit.getByRole('button', { name: 'Save changes' }).click();
      await edit.waitFor({ state: 'detached' });
      await expect.poll(() => saved.locator('[data-formula-legend]').textContent()).toContain('chamber is Chamber, head 2 (chamber-2)');
      expect(await saved.textContent()).toMatch(/9\.74\d* ± /);
      expect(await saved.locator('[data-verdict]').first().getAttribute('data-verdict')).toBe('does-not-conform');
      await saved.getByText('Band picture and working').click();
      await saved.locator('[data-band-picture] svg').waitFor();
      await dismissToasts(page);
      await saved.screenshot({ path: shot('card-ratio-1280'), animations: 'disabled' });
    } finally {
      await page.close();
    }
  }, 180_000);

  it('refuses a formula typed by hand that adds a length to a volume, beside the box in the engine’s words, then works out a volume in the unit chosen', async () => {
    await browser.clearCookies();
    const page = await browser.newPage();
    page.setDefaultTimeout(15_000);
    try {
      await page.setViewportSize({ width: 1280, height: 900 });
      await page.goto(`${site.url}/auth/github?login=demo-builder&returnTo=${encodeURIComponent(`/builds/${buildId}`)}`);
      await page.getByRole('heading', { name: TITLE }).waitFor();
      await page.getByRole('button', { name: 'New result' }).click();
      const form = page.getByRole('form', { name: 'New result' });
      await form.getByLabel('Your own formula', { exact: true }).check();
      await form.getByLabel('Reading 1', { exact: true }).selectOption(String(readings.bore!.id));
      // A reading goes by its key until renamed.
      await expect(form.getByLabel('Name of reading 1').inputValue()).resolves.toBe('bore');
      await form.getByRole('button', { name: 'Add a reading' }).click();
      await form.getByLabel('Reading 2', { exact: true }).selectOption(String(readings['chamber-1']!.id));
      await expect(form.getByLabel('Name of reading 2').inputValue()).resolves.toBe('chamber-1');
      await form.getByLabel('Name of reading 2').fill('chamber');

      const box = form.getByRole('textbox', { name: /^Formula/ });
      await box.fill('bore + chamber');
      const problem = form.locator('[id$="-error"]', { hasText: 'bore + chamber: a length and a volume cannot be added' });
      await problem.waitFor();
      expect(await box.getAttribute('aria-invalid')).toBe('true');
      expect(await box.getAttribute('aria-describedby')).toContain(await problem.getAttribute('id'));
      await form.locator('[data-live-waiting]').getByText('Put the formula right', { exact: false }).waitFor();
      await dismissToasts(page);
      await form.screenshot({ path: shot('form-formula-error-1280'), animations: 'disabled' });
      // Saving is refused at the box too.
      await form.getByRole('button', { name: 'Save result' }).click();
      await problem.waitFor();

      // A name the formula does not know, in the engine's words.
      await box.fill('chamber + dish');
      await form.locator('[id$="-error"]', { hasText: '"dish" is not one of the readings or constants' }).waitFor();

      // A volume from volumes: the dish joins, and the result is stated in millilitres.
      await form.getByRole('button', { name: 'Add a reading' }).click();
      await form.getByLabel('Reading 3', { exact: true }).selectOption(String(readings.dish!.id));
      await problem.waitFor({ state: 'detached' });
      await form.getByText('Not used by the formula: bore', { exact: false }).waitFor();
      const display = form.locator('[data-result-display]');
      // 64.2 + 5.0 = 69.2 cc. Two equal rectangular resolutions make a trapezoid, not a normal
      // distribution, so the interval may come from Monte Carlo (JCGM 101) and be written as its ends.
      await expect.poll(() => display.textContent()).toMatch(/^69\.20\d* cc(,| ±) /);
      await form.getByLabel('State the result in').selectOption('ml');
      await expect.poll(() => display.textContent()).toMatch(/^69\.20\d* ml(,| ±) /);
      await form.getByRole('button', { name: 'Remove reading 1' }).click();
      await form.getByRole('textbox', { name: 'Name', exact: true }).fill('Chamber and dish');
      await form.getByRole('button', { name: 'Save result' }).click();
      const saved = page.locator('[data-clearance="chamber-and-dish"]');
      await saved.waitFor();
      expect(await saved.locator('[data-model]').textContent()).toContain('chamber + dish');
      expect(await saved.textContent()).toMatch(/69\.20\d* ml(,| ±) /);

      // A template's own constant: the target size, typed with or without its unit, refused beside its box when it is no length.
      await page.getByRole('button', { name: 'New result' }).click();
      const stock = page.getByRole('form', { name: 'New result' });
      await stock.getByLabel('Stock to remove', { exact: true }).check();
      await stock.locator('[data-slot="measured"] select').selectOption(String(readings.bore!.id));
      const target = stock.getByRole('textbox', { name: /^Target size/ });
      await target.fill('4 cc');
      await stock.locator('[id$="-error"]', { hasText: 'is not a length' }).waitFor();
      expect(await target.getAttribute('aria-invalid')).toBe('true');
      // 4.000 in − 3.9985 in = 0.0015 in (measured − target, the template's formula).
      await target.fill('3.9985');
      await expect.poll(() => stock.locator('[data-result-display]').textContent()).toMatch(/^0\.00150\d* in ± /);
      await target.fill('101.562 mm');
      // A target in millimetres is converted exactly: 101.562 mm = 3.9985039 in (1 in = 25.4 mm,
      // NIST SP 811 B.8), so 4.000 in − 3.9985039 in = 0.0014961 in.
      await expect.poll(() => stock.locator('[data-result-display]').textContent()).toMatch(/^0\.001496 in ± /);
      await stock.getByRole('button', { name: 'Cancel' }).click();

      // The form at a phone's width: no sideways scroll of the page.
      await page.setViewportSize({ width: 390, height: 844 });
      await page.getByRole('button', { name: 'Edit Chamber and dish' }).click();
      const edit = page.getByRole('form', { name: 'Edit result Chamber and dish' });
      await expect(edit.getByLabel('Your own formula', { exact: true }).isChecked()).resolves.toBe(true);
      await expect(edit.getByRole('textbox', { name: /^Formula/ }).inputValue()).resolves.toBe('chamber + dish');
      await edit.locator('[data-result-display]').waitFor();
      await dismissToasts(page);
      await page.getByRole('button', { name: 'Dismiss notification' }).waitFor({ state: 'detached' });
      expect(await pageScrollsSideways(page)).toBe(false);
      await edit.screenshot({ path: shot('form-formula-390'), animations: 'disabled' });
      await edit.getByRole('button', { name: 'Cancel' }).click();

      await page.getByRole('button', { name: 'Edit Static compression ratio' }).click();
      const ratio = page.getByRole('form', { name: 'Edit result Static compression ratio' });
      await ratio.locator('[data-band-picture] svg').waitFor();
      await dismissToasts(page);
      expect(await pageScrollsSideways(page)).toBe(false);
      await ratio.screenshot({ path: shot('form-ratio-390'), animations: 'disabled' });
      await ratio.getByRole('button', { name: 'Cancel' }).click();
      await page.locator('[data-clearance="static-compression-ratio"]').getByText('Band picture and working').click();
      expect(await pageScrollsSideways(page)).toBe(false);
      await page.locator('[data-clearance="static-compression-ratio"]').screenshot({ path: shot('card-ratio-390'), animations: 'disabled' });
    } finally {
      await page.close();
    }
  }, 180_000);

  it('shows a cc reading and the ratio in the story editor’s claim evidence and on the review screen', async () => {
    const body = [
      'The heads went onto the bench level before the burette came out.',
      '',
      '[The chamber of head 1 took 64.2 cc](reading:chamber-1), and with head 2 on',
      '[the static ratio works out at 9.75:1](clearance:static-compression-ratio), under the spec.',
      '',
    ].join('\n');
    const story = await send(`/api/builds/${buildId}/stories`, { title: `${TITLE}: ratio`, summary: 'Chambers cc’d, ratio worked out.', body });
    expect(story.status).toBe(201);
    const storyId = story.body.story.id as number;

    await browser.clearCookies();
    const page = await browser.newPage();
    page.setDefaultTimeout(15_000);
    try {
      await page.setViewportSize({ width: 1280, height: 900 });
      await page.goto(`${site.url}/auth/github?login=demo-builder&returnTo=${encodeURIComponent(`/stories/${storyId}/edit`)}`);
      const preview = page.locator('article');
      await preview.locator('a.claim[data-claim="reading:chamber-1"][data-claim-state="ok"]').waitFor();
      await preview.locator('a.claim[data-claim="clearance:static-compression-ratio"][data-claim-state="ok"]').waitFor();
      await preview.locator('a.claim[data-claim="clearance:static-compression-ratio"]').click();
      const popover = page.getByRole('dialog', { name: 'Static compression ratio' });
      await popover.waitFor();
      const evidence = await popover.innerText();
      // The ratio with no unit, its formula, the verdict, and each reading under its name in its own unit.
      expect(evidence).toMatch(/9\.74\d* ± 0\.0\d+ \(95 %/);
      expect(evidence).toContain('pi/4*bore^2*stroke');
      expect(evidence).toContain('Out of spec');
      expect(evidence).toMatch(/chamber =\s*Chamber, head 2/);
      expect(evidence).toContain('66.0 cc ± 0.029 cc');
      await popover.locator('[data-interval]').waitFor();
      await page.screenshot({ path: shot('story-claim-1280'), animations: 'disabled' });
      await page.keyboard.press('Escape');
      await preview.locator('a.claim[data-claim="reading:chamber-1"]').click();
      const chamber = page.getByRole('dialog', { name: 'Chamber, head 1' });
      expect(await chamber.innerText()).toContain('64.2 cc');
      await page.keyboard.press('Escape');

      const lockVersion = (await owner.agent.get(`/api/stories/${storyId}`)).body.story.lockVersion as number;
      const submitted = await send(`/api/stories/${storyId}/transitions`, { action: 'submit', lockVersion });
      expect(submitted.status).toBe(200);

      await browser.clearCookies();
      await page.goto(`${site.url}/auth/github?login=demo-moderator&returnTo=${encodeURIComponent(`/review/stories/${storyId}`)}`);
      await page.getByRole('heading', { name: `${TITLE}: ratio`, level: 1 }).waitFor();
      await page.locator(`[role="option"][data-evidence-id="reading:${readings['chamber-1']!.id}"]`).click();
      const current = page.locator('[data-current]');
      await expect.poll(() => current.locator('[data-entered]').innerText()).toBe('64.2 cc');
      expect(await current.innerText()).toContain('64.2 cc ± 0.029 cc');
      expect(await current.innerText()).toMatch(/Unit\s*cubic centimetres? \(cc\)/);
      const ratioOption = page.locator('[role="option"][data-evidence-id^="clearance:"]');
      await ratioOption.click();
      await current.locator('[data-review-subject="clearance:static-compression-ratio"]').waitFor();
      expect(await current.locator('[data-model]').innerText()).toContain('pi/4*bore^2*stroke');
      expect(await current.innerText()).toMatch(/chamber =\s*Chamber, head 2/);
      expect(await current.locator('[data-result-display]').innerText()).toMatch(/^9\.74\d* ± /);
      await current.locator('[data-band-picture] svg').waitFor();
      await page.screenshot({ path: shot('review-ratio-1280'), fullPage: true, animations: 'disabled' });
    } finally {
      await page.close();
    }
  }, 180_000);
});
