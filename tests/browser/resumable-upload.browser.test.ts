import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { launchBrowser } from '../../scripts/lib/chromium';
import { repoRoot } from '../../scripts/lib/bootstrap';
import { Clip } from '../../server/features/clips/clip.model';
import { ClipUpload } from '../../server/features/clips/clip-upload.model';
import { User } from '../../server/features/users/user.model';
import { startBrowserApp } from '../support/browser-app';
import { ffmpegDirect } from '../support/clips';
import { freshAccount } from '../support/test-app';

/*
 * The upload panel over a slow connection (Chromium's network emulation): it shows the pace and
 * the time left, pauses and resumes, says where it stopped when the connection goes and carries
 * on when it returns, and after a reload picks the same upload up again when the same file is
 * chosen (one upload on the server, not two).
 */

let site: Awaited<ReturnType<typeof startBrowserApp>>;
let browser: Awaited<ReturnType<typeof launchBrowser>>;
let work: string;
let video: string;
const artifacts = path.join(repoRoot, 'tests/artifacts');

beforeAll(async () => {
  work = fs.mkdtempSync(path.join(os.tmpdir(), 'benchproof-browser-tus-'));
  video = path.join(work, 'gearbox-noise.mp4');
  // Random pixels, lossless: about 8 MB that do not compress, so the upload takes a while.
  await ffmpegDirect([
    '-v', 'error', '-y',
    '-f', 'lavfi', '-i', "nullsrc=s=320x240:r=30:d=2,geq=lum='random(1)*255':cb=128:cr=128",
    '-c:v', 'libx264', '-preset', 'ultrafast', '-qp', '0', '-pix_fmt', 'yuv420p', '-movflags', '+faststart', '-f', 'mp4',
    video,
  ]);
  site = await startBrowserApp();
  browser = await launchBrowser();
  fs.mkdirSync(artifacts, { recursive: true });
}, 240_000);

afterAll(async () => {
  await browser?.dispose();
  await site?.close();
  if (work) fs.rmSync(work, { recursive: true, force: true });
});

describe('a builder uploading a clip over a slow, unreliable connection', () => {
  it('sees pace and time left, pauses and resumes, rides out a lost connection, and picks the upload up after a reload', async () => {
    const account = freshAccount(site, 'tus-browser');
    const page = await browser.newPage();
    page.setDefaultTimeout(20_000);
    try {
      await page.goto(`${site.url}/auth/github?login=${account.login}&returnTo=%2F`);
      await page.waitForURL(`${site.url}/`);
      const [promoted] = await User.update({ role: 'builder' }, { where: { login: account.login } });
      expect(promoted).toBe(1);
      const buildId = await page.evaluate(async () => {
        const { token } = (await (await fetch('/api/csrf-token')).json()) as { token: string };
        const res = await fetch('/api/builds', {
          method: 'POST',
          headers: { 'Content-Type': 'application/json', 'x-csrf-token': token },
          body: JSON.stringify({ title: 'Gearbox over shop Wi-Fi (test)' }),
        });
        if (res.status !== 201) throw new Error(`creating the build answered ${res.status}: ${await res.text()}`);
        return ((await res.json()) as { build: { id: number } }).build.id;
      });
      await page.goto(`${site.url}/builds/${buildId}`);
      await page.getByRole('heading', { name: 'Gearbox over shop Wi-Fi (test)' }).waitFor();

      // About 300 kB/s up.
      const cdp = await page.context().newCDPSession(page);
      await cdp.send('Network.emulateNetworkConditions', { offline: false, latency: 20, downloadThroughput: -1, uploadThroughput: 300_000 });

      await page.locator('input[type=file]').setInputFiles([video]);
      const status = page.locator('ul[aria-label="Uploads"] [role=status]');
      await status.filter({ hasText: /B\/s/ }).waitFor();
      await status.filter({ hasText: /left/ }).waitFor();
      await page.screenshot({ path: path.join(artifacts, 'resumable-upload-1280.png') });

      await page.getByRole('button', { name: 'Pause upload of gearbox-noise.mp4' }).click();
      await status.filter({ hasText: /^Paused at/ }).waitFor();
      await page.getByRole('button', { name: 'Resume upload of gearbox-noise.mp4' }).click();
      await status.filter({ hasText: /B\/s/ }).waitFor();

      // The connection goes (emulated offline fails the next request, not the one in flight, so
      // the upload is paused first): the panel says where it stopped, and carries on by itself
      // when the connection returns.
      const slow = { offline: false, latency: 20, downloadThroughput: -1, uploadThroughput: 300_000 };
      await page.getByRole('button', { name: 'Pause upload of gearbox-noise.mp4' }).click();
      await status.filter({ hasText: /^Paused at/ }).waitFor();
      await cdp.send('Network.emulateNetworkConditions', { offline: true, latency: 0, downloadThroughput: 0, uploadThroughput: 0 });
      await page.getByRole('button', { name: 'Resume upload of gearbox-noise.mp4' }).click();
      await status.filter({ hasText: /^The upload stopped at \d+ %; it will resume when the connection returns\.$/ }).waitFor();
      await page.screenshot({ path: path.join(artifacts, 'resumable-upload-offline-1280.png') });
      await cdp.send('Network.emulateNetworkConditions', slow);
      await status.filter({ hasText: /B\/s/ }).waitFor({ timeout: 60_000 });

      // A reload in the middle: the panel lists the unfinished upload, and the same file carries on.
      await page.reload();
      await cdp.send('Network.emulateNetworkConditions', { offline: false, latency: 0, downloadThroughput: -1, uploadThroughput: -1 });
      const unfinished = page.getByRole('list', { name: 'Unfinished uploads' });
      await unfinished.getByText(/gearbox-noise\.mp4/).waitFor();
      await unfinished.getByText(/stopped at \d+ %/).waitFor();
      await page.locator('input[type=file]').setInputFiles([video]);
      await page.locator('ol[aria-label="Clips in timeline order"]').getByText('gearbox-noise').first().waitFor({ timeout: 60_000 });

      // One upload on the server, carried on rather than started again, and it became the clip.
      const uploads = await ClipUpload.findAll({ where: { buildId } });
      expect(uploads.map((u) => u.state)).toEqual(['done']);
      const clip = await Clip.findByPk(uploads[0]!.clipId!);
      expect(clip).toMatchObject({ buildId, title: 'gearbox-noise', originalName: 'gearbox-noise.mp4', sizeBytes: String(fs.statSync(video).size) });
      await expect.poll(() => page.getByRole('list', { name: 'Unfinished uploads' }).count()).toBe(0);
    } finally {
      await page.close();
    }
  }, 240_000);

  it('on a phone, the picker takes any video (it offers the camera itself) and the camera is one button away, never forced', async () => {
    const account = freshAccount(site, 'tus-phone');
    const page = await browser.newPage();
    page.setDefaultTimeout(20_000);
    try {
      // A touch screen: the coarse pointer phones and tablets report.
      const cdp = await page.context().newCDPSession(page);
      await cdp.send('Emulation.setTouchEmulationEnabled', { enabled: true, maxTouchPoints: 5 });
      await page.goto(`${site.url}/auth/github?login=${account.login}&returnTo=%2F`);
      await page.waitForURL(`${site.url}/`);
      await User.update({ role: 'builder' }, { where: { login: account.login } });
      const buildId = await page.evaluate(async () => {
        const { token } = (await (await fetch('/api/csrf-token')).json()) as { token: string };
        const res = await fetch('/api/builds', { method: 'POST', headers: { 'Content-Type': 'application/json', 'x-csrf-token': token }, body: JSON.stringify({ title: 'Phone at the bench (test)' }) });
        return ((await res.json()) as { build: { id: number } }).build.id;
      });
      await page.goto(`${site.url}/builds/${buildId}`);
      expect(await page.evaluate(() => window.matchMedia('(pointer: coarse)').matches)).toBe(true);

      const [chooser] = await Promise.all([page.waitForEvent('filechooser'), page.getByRole('button', { name: 'Choose files…' }).click()]);
      expect(await chooser.element().getAttribute('accept')).toBe('video/*');
      expect(await chooser.element().getAttribute('capture')).toBeNull();
      expect(chooser.isMultiple()).toBe(true);

      const [camera] = await Promise.all([page.waitForEvent('filechooser'), page.getByRole('button', { name: 'Record with the camera…' }).click()]);
      expect(await camera.element().getAttribute('accept')).toBe('video/*');
      expect(await camera.element().getAttribute('capture')).toBe('environment');
    } finally {
      await page.close();
    }
  }, 120_000);
});
