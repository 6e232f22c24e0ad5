// `npx tsx scripts/look.ts [url-path …]`: screenshots of pages of a running `npm start`
// into tests/artifacts/look/, signed in as LOOK_AS (a demo login) when set. For eyeballing.
import fs from 'node:fs';
import path from 'node:path';
import { launchBrowser } from './lib/chromium';
import { repoRoot } from './lib/bootstrap';

const base = process.env.LOOK_URL ?? 'http://127.0.0.1:3000';
const pages = process.argv.slice(2).length ? process.argv.slice(2) : ['/'];
const out = path.join(repoRoot, 'tests/artifacts/look');
fs.mkdirSync(out, { recursive: true });
const browser = await launchBrowser();
try {
  const page = await browser.newPage();
  if (process.env.LOOK_WIDTH) await page.setViewportSize({ width: Number(process.env.LOOK_WIDTH), height: 900 });
  if (process.env.LOOK_AS) await page.goto(`${base}/auth/github?login=${process.env.LOOK_AS}`);
  for (const p of pages) {
    await page.goto(base + p, { waitUntil: 'networkidle' });
    const file = path.join(out, `${(process.env.LOOK_AS ?? 'anon')}-${p.replace(/[^a-z0-9]+/gi, '_') || 'home'}.png`);
    await page.screenshot({ path: file, fullPage: true });
    console.log(file);
  }
} finally {
  await browser.dispose();
}
