import fs from 'node:fs';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { launchBrowser } from '../../scripts/lib/chromium';
import { repoRoot } from '../../scripts/lib/bootstrap';
import { startBrowserApp } from '../support/browser-app';

let site: Awaited<ReturnType<typeof startBrowserApp>>;
let browser: Awaited<ReturnType<typeof launchBrowser>>;
const artifacts = path.join(repoRoot, 'tests/artifacts');

beforeAll(async () => {
  site = await startBrowserApp();
  browser = await launchBrowser();
  fs.mkdirSync(artifacts, { recursive: true });
}, 240_000);
afterAll(async () => {
  await browser?.dispose();
  await site?.close();
});

// What each role finds in the main navigation (the server enforces the same areas).
const cases = [
  { login: 'demo-builder', name: 'Ines Calloway', sees: ['Stories', 'Calculator', 'My builds'], not: ['Review queue', 'Users'] },
  { login: 'demo-moderator', name: 'Dagny Orlov', sees: ['Stories', 'Review queue'], not: ['My builds', 'Users'] },
  { login: 'demo-follower', name: 'Sam Okafor', sees: ['Stories', 'Calculator'], not: ['My builds', 'Review queue', 'Users'] },
  { login: 'demo-admin', name: 'Priya Natarajan', sees: ['Stories', 'Review queue', 'Users'], not: ['My builds'] },
];

describe('a person signing in through the local provider page', () => {
  it.each(cases)('as $login sees their name and the navigation of their role', async ({ login, name, sees, not }) => {
    await browser.clearCookies();
    const page = await browser.newPage();
    page.setDefaultTimeout(10_000);
    try {
      await page.goto(site.url + '/');
      await page.getByRole('link', { name: 'Sign in', exact: true }).click();
      await page.getByRole('link', { name: /Continue with GitHub/ }).click();
      await page.waitForURL((u) => u.origin === site.fake.url());
      await page.getByRole('link', { name: new RegExp(login + '(?!-)') }).click();
      await page.waitForURL((u) => u.origin === site.url);
      await expect.poll(() => page.getByRole('button', { name: `Account: ${name}` }).count()).toBe(1);
      const nav = page.getByRole('navigation', { name: 'Main' });
      for (const label of sees) expect(await nav.getByRole('link', { name: label, exact: true }).count()).toBe(1);
      for (const label of not) expect(await nav.getByRole('link', { name: label, exact: true }).count()).toBe(0);
      await page.screenshot({ path: path.join(artifacts, `sign-in-${login}.png`), fullPage: true });
    } finally {
      await page.close();
    }
  });

  it('signed in as the admin, the Users screen lists the demo accounts with their roles', async () => {
    await browser.clearCookies();
    const page = await browser.newPage();
    try {
      await page.goto(`${site.url}/auth/github?login=demo-admin&returnTo=%2Fadmin%2Fusers`);
      await page.waitForURL(`${site.url}/admin/users`);
      await expect.poll(() => page.getByRole('cell', { name: 'demo-follower' }).count()).toBeGreaterThan(0);
      await page.screenshot({ path: path.join(artifacts, 'admin-users.png'), fullPage: true });
    } finally {
      await page.close();
    }
  });
});
