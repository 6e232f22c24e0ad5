import fs from 'node:fs';
import path from 'node:path';
import AxeBuilder from '@axe-core/playwright';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { launchBrowser } from '../../scripts/lib/chromium';
import { repoRoot } from '../../scripts/lib/bootstrap';
import { startBrowserApp } from '../support/browser-app';
import { freshAccount } from '../support/test-app';

/*
 * The public calculator (/calculator) at the margins a builder meets: a feeler-blade bracket as
 * wide as the spec, two readings that cannot decide, one micrometer on both sides of a
 * difference, a formula whose units do not add up, the server's second opinion, and the page on
 * a phone. Anonymous: the calculator needs no sign-in; the last test signs in to type
 * temperatures in the builder's °F.
 */

let site: Awaited<ReturnType<typeof startBrowserApp>>;
let browser: Awaited<ReturnType<typeof launchBrowser>>;
type Page = Awaited<ReturnType<typeof browser.newPage>>;
const artifacts = path.join(repoRoot, 'tests/artifacts');
const shot = (name: string) => path.join(artifacts, `calculator-${name}.png`);

beforeAll(async () => {
  site = await startBrowserApp();
  browser = await launchBrowser();
  fs.mkdirSync(artifacts, { recursive: true });
}, 240_000);
afterAll(async () => {
  await browser?.dispose();
  await site?.close();
});

/** Opens the calculator at a width, loads an example by its button and waits for its first result. */
async function openExample(title: string, width = 1280): Promise<Page> {
  const page = await browser.newPage();
  page.setDefaultTimeout(15_000);
  await page.setViewportSize({ width, height: width > 600 ? 900 : 844 });
  await page.goto(`${site.url}/calculator`);
  await page.getByRole('heading', { name: 'Measurement calculator', level: 1 }).waitFor();
  await page.getByRole('button', { name: title, exact: true }).click();
  return page;
}

const summary = (page: Page) => page.locator('[data-calc-summary]').innerText();
const resultPanel = (page: Page) => page.getByRole('region', { name: 'Result', exact: true });
const budgetPanel = (page: Page) => page.getByRole('region', { name: 'Uncertainty budget and working', exact: true });
const reading = (page: Page, n: number) => page.locator('fieldset[data-reading-row]').nth(n - 1);
/** The value beside a term of the result's definition list. */
const term = (page: Page, name: string | RegExp) => resultPanel(page).locator('dt', { hasText: name }).locator('xpath=following-sibling::dd[1]');

async function setSpec(page: Page, min: string, max: string) {
  const spec = page.getByRole('region', { name: 'Spec', exact: true });
  await spec.getByLabel('Min', { exact: true }).fill(min);
  await spec.getByLabel('Max', { exact: true }).fill(max);
}

describe('the calculator at the margin, as a builder uses it', () => {
  it('judges a feeler-blade bracket exactly as wide as the spec within spec by Monte Carlo, and out of spec against the band below', async () => {
    const page = await openExample('Oil pump: rotor to body, feeler blades');
    try {
      // The example's preferred band and reject limit are not part of this question. The spec goes in
      // first, so a value of 0.0035 in is only ever judged against 0.003–0.004 in.
      await page.getByText('Preferred band, reject limit, source').click();
      const spec = page.getByRole('region', { name: 'Spec', exact: true });
      await spec.getByLabel('Preferred min').fill('');
      await spec.getByLabel('Preferred max').fill('');
      await spec.getByLabel('Reject limit').fill('');
      await setSpec(page, '0.003', '0.004');
      const row = reading(page, 1);
      await row.getByLabel('Passes', { exact: true }).fill('0.003');
      await row.getByLabel('Stops', { exact: true }).fill('0.004');

      // Midpoint 0.0035 in; anywhere between the blades alike: rectangular, a = 0.0005 in. Its 95 %
      // interval is ±0.95a = ±0.000475 in (GUM G.1.3; JCGM 101 6.4.2), so [0.003025, 0.003975] in,
      // inside 0.003–0.004 in: within spec even by the guarded rule.
      await expect.poll(() => summary(page)).toMatch(/^0\.0035\d* in ± 0\.0004[78] in: within spec \(guarded rule\)\.$/);
      await expect(term(page, /% interval$/).innerText()).resolves.toMatch(/0\.0030[23]\d* in to 0\.0039[78]\d* in/);
      // A rectangular alone is far from normal, so the interval is counted, not assumed.
      await expect(term(page, 'Interval from').innerText()).resolves.toMatch(/^Monte Carlo, [\d,]+ trials \(JCGM 101\)$/);
      await expect(resultPanel(page).locator('[data-verdict="conforms"]').first().innerText()).resolves.toMatch(/within spec/i);
      await page.screenshot({ path: shot('feeler-within-1280'), fullPage: true });

      // The same gap against 0.002–0.003 in: the whole interval lies above the upper limit.
      await setSpec(page, '0.002', '0.003');
      await expect.poll(() => summary(page)).toMatch(/: out of spec \(guarded rule\)\.$/);
      await expect(resultPanel(page).locator('[data-verdict="does-not-conform"]').first().innerText()).resolves.toMatch(/out of spec/i);
    } finally {
      await page.close();
    }
  });

  it('calls two repeated readings too close to call when one degree of freedom stretches the interval past a limit', async () => {
    const page = await openExample('Valve lash: one dragging blade');
    try {
      const row = reading(page, 1);
      await row.getByLabel('Kind').selectOption('repeated');
      await row.getByLabel('Values').fill('0.0046 0.0050');
      await setSpec(page, '0.002', '0.006');
      // Mean 0.0048 in, s = 0.000283 in, u = s/√2 = 0.0002 in with ν = 1: k = t₉₅(1) = 12.71 (GUM G.3,
      // Table G.2), U ≈ 0.0025 in, so the interval runs past 0.006 in though the value sits well inside.
      await expect.poll(() => summary(page)).toMatch(/^0\.0048\d* in .*: too close to call \(guarded rule\)\.$/);
      // ν_eff ≈ 1.04 (the resolution adds a little Type B), so k is close to 12.7.
      const k = Number(await term(page, 'Coverage factor k').innerText());
      expect(k).toBeGreaterThan(11);
      expect(k).toBeLessThan(14);
      await expect(term(page, /^Result$/).innerText()).resolves.toMatch(/^0\.0048\d* in/);
      await expect(resultPanel(page).locator('[data-verdict="undecided"]').first().innerText()).resolves.toMatch(/too close to call/i);
    } finally {
      await page.close();
    }
  });

  it('says one micrometer used for both sides of a difference cancels, and its shared line has a sensitivity of 0', async () => {
    const page = await openExample('Piston to bore: one micrometer for both');
    try {
      await expect.poll(() => summary(page)).toMatch(/ in ± .* in: .* \(guarded rule\)\.$/);
      const instruments = page.getByRole('region', { name: 'Instruments', exact: true });
      await instruments.getByText(/bore and piston were read with mic 1, so they share its calibration error: added once and subtracted once, it cancels\./).waitFor();

      const table = budgetPanel(page).getByRole('table', { name: 'Uncertainty budget, largest share first' });
      const shared = table.locator('tr[data-shared]');
      await expect(shared.count()).resolves.toBe(1);
      await expect(shared.getByText(/shared by .*bore.*piston.*counted once/).count()).resolves.toBe(1);
      // Columns after the source: distribution, divisor, u, sensitivity c, contribution, ν, share.
      const cells = shared.locator('td');
      await expect(cells.nth(3).innerText()).resolves.toBe('0');
      await expect(cells.nth(4).innerText()).resolves.toBe('0');
      await budgetPanel(page).scrollIntoViewIfNeeded();
      await page.screenshot({ path: shot('shared-micrometer-1280'), fullPage: true });
    } finally {
      await page.close();
    }
  });

  it('works a compression ratio from its formula with a budget of shares, and shows the engine refusing a length added to a volume', async () => {
    const page = await openExample('Compression ratio (formula)');
    try {
      // A ratio has no unit; a quotient of readings may give a lopsided interval: "10.239 (interval 10.191 to 10.288)".
      await expect.poll(() => summary(page)).toMatch(/^\d+\.\d+ (± \d+\.\d+|\(interval \d+\.\d+ to \d+\.\d+\)): .* \(guarded rule\)\.$/);
      await expect(term(page, /^Result$/).innerText()).resolves.toMatch(/^\d+\.\d+$/);

      const table = budgetPanel(page).getByRole('table', { name: 'Uncertainty budget, largest share first' });
      const rows = table.locator('tbody tr');
      expect(await rows.count()).toBeGreaterThanOrEqual(5);
      const sources = await table.locator('tbody th[scope=row]').allInnerTexts();
      for (const key of ['bore', 'stroke', 'chamber', 'gasket-bore', 'gasket-thickness', 'deck-height', 'dish']) {
        expect(sources.some((s) => s.includes(key)), `a budget line for ${key} in ${JSON.stringify(sources)}`).toBe(true);
      }
      const shares = (await rows.locator('td:last-child').allInnerTexts()).map((t) => t.trim());
      for (const share of shares) expect(share).toMatch(/^(< 0\.1|\d+\.\d) %$/);
      const total = shares.reduce((sum, s) => sum + (s.startsWith('<') ? 0 : Number.parseFloat(s)), 0);
      expect(total).toBeGreaterThan(99);
      expect(total).toBeLessThan(101);
      await page.screenshot({ path: shot('compression-ratio-1280'), fullPage: true });

      // A length added to a volume: no unit makes that sum, and the engine says so.
      const formula = page.getByRole('region', { name: 'Model', exact: true }).getByLabel('Formula', { exact: true });
      await formula.fill('chamber + stroke');
      await expect.poll(() => summary(page)).toMatch(/^Not worked out: one problem with the model\.$/);
      // It is listed in the result panel, against the formula; the formula box itself carries no error mark.
      const refusal = resultPanel(page).locator('li', { hasText: /^Formula:/ });
      await refusal.waitFor();
      await expect(refusal.innerText()).resolves.toMatch(/chamber \+ stroke: a volume and a length cannot be added/);
      await page.screenshot({ path: shot('formula-refused-1280'), fullPage: true });
    } finally {
      await page.close();
    }
  });

  it('asks the server to work the same request out and reports that it agrees', async () => {
    const page = await openExample('End float: bore depth − component height');
    try {
      await expect.poll(() => summary(page)).toMatch(/ in ± .* in: .* \(guarded rule\)\.$/);
      const local = await summary(page);
      const answered = page.waitForResponse((r) => r.url().endsWith('/api/calc') && r.request().method() === 'POST');
      await resultPanel(page).getByRole('button', { name: 'Check on the server' }).click();
      const response = await answered;
      expect(response.status()).toBe(200);
      const body = (await response.json()) as { value: number; unit: string; verdict: string | null };
      // 0.5642 in − 0.5595 in = 0.0047 in.
      expect(body.unit).toBe('in');
      expect(body.value).toBeCloseTo(0.0047, 10);
      expect(local).toContain(body.verdict === 'conforms' ? 'within spec' : body.verdict === 'undecided' ? 'too close to call' : 'out of spec');
      await resultPanel(page).getByRole('status').filter({ hasText: 'The server agrees:' }).waitFor();
      await expect(resultPanel(page).getByText('same value, expanded uncertainty and verdict').count()).resolves.toBe(1);
    } finally {
      await page.close();
    }
  });

  it('has no axe-core violations with a result shown, and at 390 px the budget table scrolls in its own box', async () => {
    const page = await openExample('Piston to bore: one micrometer for both');
    try {
      await expect.poll(() => summary(page)).toMatch(/ in ± .* in: .* \(guarded rule\)\.$/);
      await page.waitForLoadState('networkidle');
      const results = await new AxeBuilder({ page }).withTags(['wcag2a', 'wcag2aa', 'wcag21a', 'wcag21aa']).analyze();
      expect(results.violations.map((v) => `${v.impact} ${v.id}: ${v.help} — ${v.nodes.slice(0, 3).map((n) => n.target.join(' ')).join(' | ')}`)).toEqual([]);

      await page.setViewportSize({ width: 390, height: 844 });
      await resultPanel(page).getByRole('button', { name: 'Check on the server' }).waitFor();
      const frame = budgetPanel(page).locator('[data-table-frame]');
      await frame.scrollIntoViewIfNeeded();
      const box = await frame.evaluate((el) => ({ scroll: el.scrollWidth, client: el.clientWidth, overflowX: getComputedStyle(el).overflowX }));
      expect(box.scroll).toBeGreaterThan(box.client);
      expect(['auto', 'scroll']).toContain(box.overflowX);
      const pageWidth = await page.evaluate(() => ({ scroll: document.scrollingElement!.scrollWidth, inner: window.innerWidth }));
      expect(pageWidth.scroll).toBeLessThanOrEqual(pageWidth.inner);
      await page.screenshot({ path: shot('budget-390') });
      await page.screenshot({ path: shot('piston-390'), fullPage: true });
      await page.setViewportSize({ width: 1280, height: 900 });
      await page.screenshot({ path: shot('piston-1280'), fullPage: true });
    } finally {
      await page.close();
    }
  }, 60_000);

  it('takes temperatures in the signed-in builder’s °F, sends them in °C, and puts the instrument at the part’s temperature', async () => {
    const account = freshAccount(site, 'calc-degf');
    await browser.clearCookies();
    const page = await browser.newPage();
    page.setDefaultTimeout(15_000);
    try {
      await page.goto(`${site.url}/auth/github?login=${account.login}&returnTo=%2Fcalculator`);
      await page.getByRole('heading', { name: 'Measurement calculator', level: 1 }).waitFor();
      // °F as the account's scale, saved as the account page saves it.
      const saved = await page.evaluate(async () => {
        const { token } = (await (await fetch('/api/csrf-token')).json()) as { token: string };
        const r = await fetch('/api/me/preferences', { method: 'PATCH', headers: { 'content-type': 'application/json', 'x-csrf-token': token }, body: JSON.stringify({ temperatureScale: 'degF' }) });
        return r.status;
      });
      expect(saved).toBe(200);
      await page.reload();
      await page.getByRole('heading', { name: 'Measurement calculator', level: 1 }).waitFor();
      await page.getByRole('button', { name: 'End float: bore depth − component height', exact: true }).click();
      await expect.poll(() => summary(page)).toMatch(/ in ± .* in: .* \(guarded rule\)\.$/);

      const row = reading(page, 1);
      await row.getByText('Zero check, stated uncertainty, temperature').click();
      // t/°C = (t/°F − 32)/1.8 (NIST SP 811 B.8): 86 °F = 30 °C; a difference of 0.9 °F = 0.5 K, 0.36 °F = 0.2 K.
      await row.getByLabel('Temperature when read, °F', { exact: true }).fill('86');
      await row.getByLabel('Its standard uncertainty u(t), °F', { exact: true }).fill('0.9');
      await row.getByLabel('Part material').selectOption('cast-iron');
      await row.getByLabel('The instrument’s temperature').selectOption('same-as-part');
      await row.getByLabel('How far apart they may be, u(δθ), °F', { exact: true }).fill('0.36');
      const instruments = page.getByRole('region', { name: 'Instruments', exact: true });
      await instruments.getByRole('button', { name: 'Add an instrument' }).click();
      await instruments.getByLabel('Its temperature, °F', { exact: true }).waitFor();
      await instruments.getByRole('button', { name: 'Remove instrument 1' }).click();

      // The budget has GUM H.1's lines for the reading, in kelvin.
      const table = budgetPanel(page).getByRole('table', { name: 'Uncertainty budget, largest share first' });
      await expect
        .poll(async () => (await table.locator('tbody th[scope=row]').allInnerTexts()).join('\n'))
        .toMatch(/bore-depth: temperature of the part and the instrument together, θ = 10 K from 20 °C, u\(θ\) = 0\.5 K/);
      const sources = (await table.locator('tbody th[scope=row]').allInnerTexts()).join('\n');
      expect(sources).toMatch(/bore-depth: how far the instrument's temperature may be from the part's, δθ, u\(δθ\) = 0\.2 K/);
      expect(sources).not.toMatch(/bore-depth: part temperature, u\(t\)/);

      // What goes to the server is in °C and kelvin.
      await expect.poll(() => summary(page)).toMatch(/ in ± .* in: .* \(guarded rule\)\.$/);
      const answered = page.waitForResponse((r) => r.url().endsWith('/api/calc') && r.request().method() === 'POST');
      await resultPanel(page).getByRole('button', { name: 'Check on the server' }).click();
      const response = await answered;
      expect(response.status()).toBe(200);
      const sent = response.request().postDataJSON() as { readings: Record<string, Record<string, unknown>> };
      expect(sent.readings['bore-depth']).toMatchObject({
        temperatureC: 30,
        temperatureUncertaintyC: 0.5,
        material: 'cast-iron',
        instrumentTemperature: 'same-as-part',
        temperatureDifferenceUncertaintyC: 0.2,
      });
      await resultPanel(page).getByRole('status').filter({ hasText: 'The server agrees:' }).waitFor();
      await budgetPanel(page).scrollIntoViewIfNeeded();
      await page.screenshot({ path: shot('degf-same-temperature-1280'), fullPage: true });
    } finally {
      await page.close();
      await browser.clearCookies();
    }
  }, 60_000);
});
