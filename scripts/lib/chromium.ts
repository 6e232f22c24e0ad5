import { spawnSync } from 'node:child_process';
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { chromium, type BrowserContext } from 'playwright-core';

const executablePath = process.env.CHROMIUM_PATH ?? '/usr/bin/chromium';

/** Makes sure Debian's Chromium is installed (apt-get when root), returns its path. */
export function ensureChromium(): string {
  if (fs.existsSync(executablePath)) return executablePath;
  if (process.getuid?.() !== 0) {
    throw new Error(`Chromium is not at ${executablePath}. Install it with: sudo apt-get install -y chromium`);
  }
  console.log('[chromium] installing Debian package "chromium" (apt-get)…');
  for (const args of [['update', '-q'], ['install', '-y', '-q', '--no-install-recommends', 'chromium', 'fonts-dejavu-core']]) {
    const r = spawnSync('apt-get', args, { stdio: 'inherit', env: { ...process.env, DEBIAN_FRONTEND: 'noninteractive' } });
    if (r.status !== 0) throw new Error(`apt-get ${args.join(' ')} failed`);
  }
  if (!fs.existsSync(executablePath)) throw new Error('apt-get finished but /usr/bin/chromium is missing');
  return executablePath;
}

/** A headless Chromium with a fresh profile and no background traffic; close() removes the profile. */
export async function launchBrowser(): Promise<BrowserContext & { dispose(): Promise<void> }> {
  const profile = fs.mkdtempSync(path.join(os.tmpdir(), 'benchproof-chromium-'));
  const context = await chromium.launchPersistentContext(profile, {
    executablePath: ensureChromium(),
    headless: true,
    viewport: { width: 1280, height: 860 },
    args: [
      '--no-sandbox',
      '--disable-gpu',
      '--disable-quic',
      '--no-first-run',
      '--disable-background-networking',
      '--disable-component-update',
      '--disable-sync',
    ],
  });
  return Object.assign(context, {
    async dispose() {
      await context.close();
      fs.rmSync(profile, { recursive: true, force: true });
    },
  });
}
