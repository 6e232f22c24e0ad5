import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import AxeBuilder from '@axe-core/playwright';
import type { Page } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { clearanceResponseSchema } from '@shared/clearances/clearance.schema';
import { instrumentResponseSchema } from '@shared/instruments/instrument.schema';
import { launchBrowser } from '../../scripts/lib/chromium';
import { Follow } from '../../server/features/follows/follow.model';
import { User } from '../../server/features/users/user.model';
import { startBrowserApp } from '../support/browser-app';
import { makeTestClip } from '../support/clips';
import { sessionFor, type Session } from '../support/matrix-fixtures';
import { fixtureBody, makeReviewFixture, publishThroughReview, type ReviewFixture } from '../support/review-fixtures';

/*
 * The invented pump of tests/support/review-fixtures.ts, judged against an invented spec with a
 * preferred band and a reject limit, its outside micrometer zero-checked one tenth high that day:
 *   bore depth 0.5642 in; rotor height 0.5595 in − 0.0001 in = 0.5594 in; end float 0.0048 in,
 *   inside the 0.002–0.006 in band, outside the 0.003–0.004 in preferred band, clear of the
 *   0.008 in reject limit (guarded rule, ISO 14253-1; U ≈ 0.0001 in).
 * In millimetres (1 in = 25.4 mm exactly, NIST SP 811 B.8): 0.5642 in = 14.33068 mm, written 14.331 mm
 * because 0.0001 in = 0.00254 mm supports steps of 0.001 mm (B.7.2); the preferred band
 * 0.0762–0.1016 mm is written 0.076–0.102 mm.
 */
let site: Awaited<ReturnType<typeof startBrowserApp>>;
let browser: Awaited<ReturnType<typeof launchBrowser>>;
let work: string;
let owner: Session;
let fixture: ReviewFixture;
const shots = '/tmp/rd-shots';
const TITLE = 'Invented flat-twin oil pump (limits test)';

const send = (s: Session, verb: 'post' | 'patch', url: string, body: object) => s.agent[verb](url).set('x-csrf-token', s.token).send(body);

/** axe-core on the page as it stands: serious and critical violations fail, the rest are printed. */
async function expectAccessible(page: Page, what: string) {
  const results = await new AxeBuilder({ page }).withTags(['wcag2a', 'wcag2aa', 'wcag21a', 'wcag21aa']).analyze();
  const bad = results.violations.filter((v) => v.impact === 'serious' || v.impact === 'critical');
  for (const v of results.violations.filter((x) => !bad.includes(x))) console.log(`[axe ${v.impact}] ${what}: ${v.id} — ${v.help} (${v.nodes.length})`);
  expect(bad.map((v) => `${v.id}: ${v.help} — ${v.nodes.map((n) => n.target.join(' ')).join(', ')}`), what).toEqual([]);
}

async function signInAs(page: Page, login: string, returnTo: string) {
  await browser.clearCookies();
  await page.goto(`${site.url}/auth/github?login=${login}&returnTo=${encodeURIComponent(returnTo)}`);
}

beforeAll(async () => {
  work = fs.mkdtempSync(path.join(os.tmpdir(), 'benchproof-browser-limits-'));
  fs.mkdirSync(shots, { recursive: true });
  site = await startBrowserApp({ jobs: true });
  browser = await launchBrowser();
  owner = await sessionFor(site, 'owner');
  const moderator = await sessionFor(site, 'moderator');
  const clipFile = await makeTestClip({ seconds: 3, format: 'mp4-h264', dir: work, name: 'pump-limits' });

  fixture = await makeReviewFixture(owner, { clipFile, title: TITLE, body: fixtureBody({ clearanceWords: 'End float is 0.0048 in, within spec' }) });
  const mic = instrumentResponseSchema.parse((await owner.agent.get(`/api/instruments/${fixture.instruments.mic}`)).body).instrument;
  expect((await send(owner, 'patch', `/api/instruments/${mic.id}`, { serial: 'OM-1147-T', lockVersion: mic.lockVersion })).status).toBe(200);
  expect((await send(owner, 'post', `/api/instruments/${mic.id}/zero-checks`, { checkedOn: '2026-11-20', standardSize: '0.0000', shown: '0.0001' })).status).toBe(201);
  const spec = await send(owner, 'post', '/api/specs', {
    name: 'Pump end float with limits (invented, browser test)',
    appliesTo: 'Invented flat-twin rotor oil pump',
    unit: 'in',
    min: '0.002',
    max: '0.006',
    preferredMin: '0.003',
    preferredMax: '0.004',
    reject: '0.008',
    rule: 'guarded',
    source: { kind: 'manual', text: 'Invented workshop manual, section 4 (test figures)' },
  });
  expect(spec.status).toBe(201);
  const patched = await send(owner, 'patch', `/api/clearances/${fixture.clearance.id}`, { specVersionId: spec.body.spec.latest.id, lockVersion: fixture.clearance.lockVersion });
  expect(patched.status, JSON.stringify(patched.body)).toBe(200);
  fixture = { ...fixture, clearance: clearanceResponseSchema.parse(patched.body).clearance };
  await publishThroughReview(owner, moderator, fixture);

  // Sam follows Ines from the start, so there is someone to unfollow.
  const follower = await User.findOne({ where: { login: 'demo-follower' } });
  const builder = await User.findOne({ where: { login: 'demo-builder' } });
  await Follow.findOrCreate({ where: { followerId: follower!.id, builderId: builder!.id }, defaults: { followerId: follower!.id, builderId: builder!.id } });
}, 300_000);

afterAll(async () => {
  await browser?.dispose();
  await site?.close();
  if (work) fs.rmSync(work, { recursive: true, force: true });
});

describe('a reader in millimetres', () => {
  it('reads a reading as 14.331 mm and a clearance with one verdict, the preferred band and reject limit in words', async () => {
    await browser.clearCookies();
    const page = await browser.newPage();
    page.setDefaultTimeout(15_000);
    try {
      await page.setViewportSize({ width: 1280, height: 900 });
      await page.goto(`${site.url}/stories/${fixture.story.id}/claims/reading:bore-depth`);
      const panel = page.locator('#claim-panel');
      await panel.locator('[data-claim-evidence="reading:bore-depth"]').waitFor();
      await page.getByText('Metric', { exact: true }).click();
      // A reading at 0.0001 in resolution: 3 places in mm, U = 2u = 0.000058 in = 0.0015 mm in the same unit.
      await expect.poll(() => panel.innerText()).toContain('14.331 mm ± 0.0015 mm');
      const readingText = await panel.innerText();
      expect(readingText).not.toMatch(/14331|14\.3307/);
      expect(readingText).not.toMatch(/µm/);

      await page.goto(`${site.url}/stories/${fixture.story.id}/claims/clearance:end-float`);
      const evidence = panel.locator('[data-claim-evidence="clearance:end-float"]');
      await evidence.waitFor();
      const text = await evidence.innerText();
      // 0.0048 in = 0.12192 mm, at U's place (GUM 7.2.6); under 1 mm, so its micrometres too.
      expect(text).toMatch(/0\.1219 mm ± 0\.002\d mm/);
      expect(text).toMatch(/121\.9 µm ± 2\.\d µm/);
      // One verdict chip for the claim; the other limits are plain words, never a second chip.
      const verdicts = evidence.locator('[data-verdict-block] [data-verdict]');
      expect(await verdicts.count()).toBe(1);
      expect(await verdicts.first().getAttribute('data-verdict')).toBe('conforms');
      expect(await verdicts.first().innerText()).toContain('Within spec');
      expect(await evidence.locator('[data-limit-fact] [data-verdict]').count()).toBe(0);
      expect(await evidence.locator('[data-limit-fact]').allInnerTexts()).toEqual(['Outside the preferred band 0.076–0.102 mm.', 'Clear of the reject limit 0.203 mm.']);
      expect(text).toContain('band 0.051–0.152 mm');
      expect(text).not.toMatch(/0\.0762|0\.1016|0\.0508|0\.2032/);
      expect(text).not.toMatch(/Too close to call against|Within the preferred band/);
      // The readings in the same panel, in millimetres like the clearance.
      expect(text).toContain('14.331 mm');
      expect(text).toContain('zero offset');
      await page.screenshot({ path: path.join(shots, 'claim-panel-metric-1280.png') });
      await expectAccessible(page, 'claim panel in millimetres, 1280 px');

      await page.setViewportSize({ width: 390, height: 844 });
      await evidence.waitFor();
      await page.screenshot({ path: path.join(shots, 'claim-panel-metric-390.png') });
      await panel.evaluate((el) => el.scrollTo(0, 420));
      await page.screenshot({ path: path.join(shots, 'claim-panel-metric-390-verdict.png') });
      await expectAccessible(page, 'claim panel in millimetres, 390 px');
    } finally {
      await page.close();
    }
  }, 120_000);
});

describe('the verification page of a printed sheet', () => {
  it('states the band, preferred band, reject limit, serials, calibration due dates and zero offsets, with one verdict', async () => {
    await browser.clearCookies();
    const page = await browser.newPage();
    page.setDefaultTimeout(15_000);
    try {
      await page.setViewportSize({ width: 1280, height: 900 });
      await page.goto(`${site.url}/verify/parts/${fixture.partId}?story=${fixture.story.id}&rev=1`);
      await page.getByText('This sheet is the current revision.').waitFor();
      const stories = await page.getByRole('region', { name: 'Stories on the sheet' }).innerText();
      expect(stories).toContain(`“${TITLE}: end float”: printed from revision 1; still the current revision`);
      expect(stories).not.toMatch(/Entry \d/);
      const row = page.locator('tr[data-clearance="end-float"]');
      const rowText = await row.innerText();
      expect(rowText).toContain('Spec band 0.002–0.006 in · preferred band 0.003–0.004 in · reject limit 0.008 in');
      expect(await row.locator('[data-verdict]').count()).toBe(1);
      expect(await row.locator('[data-limit-fact]').allInnerTexts()).toEqual(['Outside the preferred band 0.003–0.004 in.', 'Clear of the reject limit 0.008 in.']);
      expect(rowText).toContain('zero offset +0.0001 in taken off');
      expect(rowText).toContain('serial OM-1147-T');
      const instruments = await page.getByRole('region', { name: 'Instruments' }).innerText();
      // Calibrated 2026-01-05 with a 3650-day interval: due 2036-01-03 (2028 and 2032 are leap years).
      expect(instruments).toMatch(/serial OM-1147-T/);
      expect(instruments).toMatch(/due 3 Jan 2036|due Jan 3, 2036/);
      await page.screenshot({ path: path.join(shots, 'verify-1280.png'), fullPage: true });
      await expectAccessible(page, 'verification page, 1280 px');

      await page.setViewportSize({ width: 390, height: 844 });
      await page.screenshot({ path: path.join(shots, 'verify-390.png'), fullPage: true });
      await expectAccessible(page, 'verification page, 390 px');

      // A cut-off code: the reason in words, and a way to the current sheet.
      await page.setViewportSize({ width: 1280, height: 900 });
      await page.goto(`${site.url}/verify/parts/${fixture.partId}?story=${fixture.story.id}&rev=abc`);
      const alert = page.getByRole('alert');
      await alert.getByText('This sheet’s revision number is missing or not a number; scan the code again or open the part’s current sheet.').waitFor();
      expect(await alert.innerText()).not.toMatch(/rev:|expected number|Too small/);
      await page.screenshot({ path: path.join(shots, 'verify-bad-revision-1280.png') });
      await expectAccessible(page, 'verification page, unreadable code');
      await alert.getByRole('link', { name: 'open the part’s current sheet' }).click();
      await page.getByText('This sheet is the current revision.').waitFor();
    } finally {
      await page.close();
    }
  }, 90_000);
});

describe('a follower unfollowing', () => {
  it('shows where the mail goes, asks before unfollowing, and says it is done', async () => {
    const page = await browser.newPage();
    page.setDefaultTimeout(15_000);
    try {
      await page.setViewportSize({ width: 1280, height: 900 });
      await signInAs(page, 'demo-follower', '/account/follows');
      const row = page.locator('[data-follow="demo-builder"]');
      await row.waitFor();
      expect(await page.locator('[data-mail-address]').innerText()).toContain('sam@okafor-garage.example');
      await page.screenshot({ path: path.join(shots, 'follows-1280.png'), fullPage: true });
      await expectAccessible(page, 'follows page, 1280 px');
      await page.setViewportSize({ width: 390, height: 844 });
      await page.screenshot({ path: path.join(shots, 'follows-390.png'), fullPage: true });
      await expectAccessible(page, 'follows page, 390 px');
      await page.setViewportSize({ width: 1280, height: 900 });

      // Asked first; keeping the follow changes nothing and puts focus back on the button.
      const unfollow = row.getByRole('button', { name: 'Unfollow Ines Calloway' });
      await unfollow.click();
      const dialog = page.getByRole('alertdialog', { name: 'Unfollow Ines Calloway?' });
      await dialog.waitFor();
      expect(await dialog.innerText()).toContain('no more e-mail when Ines Calloway publishes');
      await page.screenshot({ path: path.join(shots, 'follows-confirm-1280.png') });
      await expectAccessible(page, 'unfollow dialog');
      await dialog.getByRole('button', { name: 'Keep following' }).click();
      await dialog.waitFor({ state: 'detached' });
      expect(await page.evaluate(() => document.activeElement?.textContent)).toContain('Unfollow');
      await row.waitFor();

      await unfollow.click();
      await dialog.getByRole('button', { name: 'Unfollow Ines Calloway' }).click();
      await page.getByText('You no longer follow Ines Calloway').first().waitFor();
      await row.waitFor({ state: 'detached' });
      await page.screenshot({ path: path.join(shots, 'follows-unfollowed-toast-1280.png') });

      // From the builder's profile: following is one click, unfollowing asks.
      await page.goto(`${site.url}/builders/demo-builder`);
      await page.getByRole('button', { name: 'Follow Ines Calloway' }).click();
      await page.getByRole('button', { name: 'Following Ines Calloway' }).click();
      const again = page.getByRole('alertdialog', { name: 'Unfollow Ines Calloway?' });
      await again.waitFor();
      await again.getByRole('button', { name: 'Unfollow Ines Calloway' }).click();
      await page.getByRole('button', { name: 'Follow Ines Calloway' }).waitFor();
      await page.getByText('You no longer follow Ines Calloway').first().waitFor();
    } finally {
      await page.close();
    }
  }, 120_000);
});
