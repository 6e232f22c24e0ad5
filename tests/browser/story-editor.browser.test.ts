import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import type { Page } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { storyResponseSchema } from '@shared/stories/story.schema';
import { launchBrowser } from '../../scripts/lib/chromium';
import { repoRoot } from '../../scripts/lib/bootstrap';
import { startBrowserApp } from '../support/browser-app';
import { ffmpegDirect, makeTestClip } from '../support/clips';
import { sessionFor, uploadClip, waitUntilReady, type Session } from '../support/matrix-fixtures';

let site: Awaited<ReturnType<typeof startBrowserApp>>;
let browser: Awaited<ReturnType<typeof launchBrowser>>;
let work: string;
let owner: Session;
let buildId: number;
const artifacts = path.join(repoRoot, 'tests/artifacts');

const send = (verb: 'post' | 'patch', url: string, body?: object) => {
  const req = owner.agent[verb](url).set('x-csrf-token', owner.token);
  return body === undefined ? req : req.send(body);
};

async function created<T = Record<string, unknown>>(res: Promise<{ status: number; body: T }>, what: string): Promise<T> {
  const r = await res;
  if (r.status !== 201) throw new Error(`${what} refused: ${r.status} ${JSON.stringify(r.body)}`);
  return r.body;
}

async function storedStory(storyId: number) {
  const res = await owner.agent.get(`/api/stories/${storyId}`).expect(200);
  return storyResponseSchema.parse(res.body).story;
}

const saveState = (page: Page) => page.locator('[data-save-state]');
const waitSaved = (page: Page) => page.locator('[data-save-state="saved"]').waitFor({ timeout: 15_000 });

beforeAll(async () => {
  work = fs.mkdtempSync(path.join(os.tmpdir(), 'benchproof-browser-story-'));
  site = await startBrowserApp({ jobs: true });
  browser = await launchBrowser();
  fs.mkdirSync(artifacts, { recursive: true });
  owner = await sessionFor(site, 'owner');

  // The evidence the entry will cite, made through the API as the builder would make it.
  const build = await created(send('post', '/api/builds', { title: 'Invented flat-twin oil pump, diary test', subject: 'An invented pump for the editor test' }), 'build');
  buildId = (build as { build: { id: number } }).build.id;
  const clipFile = await makeTestClip({ seconds: 3, format: 'mp4-h264', dir: work, name: 'pump-end-float' });
  const clipId = await uploadClip(owner, buildId, clipFile);
  await waitUntilReady(owner, clipId);
  const depthMoment = await created(send('post', `/api/clips/${clipId}/moments`, { atMs: 600, label: 'Depth micrometer on the pump body' }), 'moment');
  const heightMoment = await created(send('post', `/api/clips/${clipId}/moments`, { atMs: 1800, label: 'Rotor height' }), 'moment');
  const instrument = await created(
    send('post', '/api/instruments', {
      name: 'Test 0–6 in depth micrometer',
      kind: 'depth-micrometer',
      serial: 'TEST-DM-01',
      unit: 'in',
      resolution: '0.0001',
      lastCalibratedOn: '2026-01-05',
      calibrationIntervalDays: 3650,
      calibratedBy: 'Invented test lab',
    }),
    'instrument',
  );
  const instrumentId = (instrument as { instrument: { id: number } }).instrument.id;
  const reading = async (momentId: number, key: string, name: string, value: string) =>
    ((await created(send('post', `/api/builds/${buildId}/readings`, { momentId, instrumentId, key, name, kind: 'direct', value, takenOn: '2026-11-20' }), `reading ${key}`)) as {
      reading: { id: number };
    }).reading.id;
  const bore = await reading((depthMoment as { moment: { id: number } }).moment.id, 'bore-depth', 'Bore depth', '0.9870');
  const rotor = await reading((heightMoment as { moment: { id: number } }).moment.id, 'rotor-height', 'Rotor height', '0.9823');
  const spec = await created(
    send('post', '/api/specs', {
      name: 'Invented pump end float (test)',
      appliesTo: 'invented test pump',
      unit: 'in',
      min: '0.002',
      max: '0.006',
      rule: 'guarded',
      source: { kind: 'common-practice', text: 'Invented figures for the editor test' },
    }),
    'spec',
  );
  const specVersionId = (spec as { spec: { latest: { id: number } } }).spec.latest.id;
  await created(
    send('post', `/api/builds/${buildId}/clearances`, {
      key: 'end-float',
      name: 'End float',
      template: 'end-float',
      terms: [
        { readingId: bore, sign: 1 },
        { readingId: rotor, sign: -1 },
      ],
      specVersionId,
    }),
    'clearance',
  );
}, 240_000);

afterAll(async () => {
  await browser?.dispose();
  await site?.close();
  fs.rmSync(work, { recursive: true, force: true });
});

describe('a builder writing up a session at the bench', () => {
  it('writes an entry with a claim that holds and one whose target does not exist, autosaves, survives a reload, meets a second tab without losing text, adds a caution, an image and a kept revision, and restores an older one', async () => {
    await browser.clearCookies();
    const page = await browser.newPage();
    page.setDefaultTimeout(15_000);
    try {
      await page.goto(`${site.url}/auth/github?login=demo-builder&returnTo=${encodeURIComponent(`/builds/${buildId}/stories`)}`);
      await page.getByRole('heading', { name: 'Stories', exact: true, level: 1 }).waitFor();
      await page.getByText('No stories yet').waitFor();
      await page.getByRole('button', { name: 'New story' }).click();
      await page.getByRole('dialog').getByLabel('Title').fill('Oil pump: end float after lapping (test)');
      await page.getByRole('button', { name: 'Create and open the editor' }).click();
      await page.getByRole('heading', { name: 'Edit story' }).waitFor();
      const storyId = Number(/\/stories\/(\d+)\/edit/.exec(page.url())?.[1]);
      expect(storyId).toBeGreaterThan(0);

      const text = page.getByLabel('Text (Markdown)');
      await text.click();
      await page.keyboard.insertText('Faced the pump body and lapped the rotors. The end float is now 0.0047 in, within spec.');
      // Select the words that state the figure and link them with the picker (Ctrl+K).
      await text.evaluate((el: HTMLTextAreaElement) => {
        const words = 'end float is now 0.0047 in, within spec';
        const at = el.value.indexOf(words);
        el.setSelectionRange(at, at + words.length);
      });
      await page.keyboard.press('Control+k');
      const picker = page.getByRole('dialog', { name: 'Link a claim to its evidence' });
      await picker.getByRole('option', { name: /End float/ }).waitFor();
      await picker.getByLabel('Search readings and clearances').fill('end float');
      await page.keyboard.press('Enter');
      await picker.waitFor({ state: 'detached' });
      await expect.poll(() => text.inputValue()).toContain('[end float is now 0.0047 in, within spec](clearance:end-float)');
      await text.press('End');
      await page.keyboard.insertText('\n\nThe [pump cover gap](clearance:pump-cover-gap) was not taken yet.');

      // Preview: the good claim holds, the unknown target is flagged, in the text and in the Claims panel.
      const preview = page.locator('article');
      await preview.locator('a.claim[data-claim="clearance:end-float"][data-claim-state="ok"]').waitFor();
      await preview.locator('a.claim[data-claim="clearance:pump-cover-gap"][data-claim-state="unknown-target"]').waitFor();
      const attention = page.getByRole('list', { name: 'Claims that need attention' });
      await expect.poll(() => attention.locator('li').count()).toBe(1);
      expect(await attention.innerText()).toContain('No such evidence');
      expect(await attention.innerText()).toContain('pump cover gap');
      expect(await page.getByRole('list', { name: 'Claims that hold' }).innerText()).toContain('end float is now 0.0047 in, within spec');
      // "Show in text" puts the cursor on the broken claim in the source.
      await attention.getByRole('button', { name: /Show in text/ }).click();
      const selection = await text.evaluate((el: HTMLTextAreaElement) => el.value.slice(el.selectionStart, el.selectionEnd));
      expect(selection).toBe('[pump cover gap](clearance:pump-cover-gap)');

      // A claim opens its evidence beside it: value ± U, the verdict with its rule, the readings.
      await preview.locator('a.claim[data-claim="clearance:end-float"]').click();
      const popover = page.getByRole('dialog', { name: 'End float' });
      await popover.waitFor();
      expect(await popover.innerText()).toMatch(/0\.0047\d* in ± [\d.]+ in \(95 %, k = 1\.9[01]\)/);
      expect(await popover.innerText()).toContain('Within spec');
      expect(await popover.innerText()).toMatch(/guarded rule, k = 1\.9[01]/);
      expect(await popover.innerText()).toContain('Rotor height');
      await page.screenshot({ path: path.join(artifacts, 'story-editor-1280-claim.png') });
      await page.keyboard.press('Escape');
      await popover.waitFor({ state: 'detached' });

      // Summary, tags as chips (Enter or a comma adds one; a bad one is refused beside its field), the cover still.
      await page.getByLabel('Summary').fill('Pump body faced, rotors lapped, end float remeasured.');
      const machine = page.getByLabel('Machine family');
      await machine.fill('Vellum 1100');
      await machine.press('Enter');
      await page.getByRole('list', { name: 'Machine family: tags' }).getByText('Vellum 1100').waitFor();
      await page.getByLabel('Operation', { exact: true }).fill('lapping,');
      await page.getByRole('list', { name: 'Operation: tags' }).getByText('lapping').waitFor();
      const component = page.getByLabel('Component', { exact: true });
      await component.fill('#pump');
      await component.press('Enter');
      await page.getByText('a tag has no commas, # or angle brackets').waitFor();
      await component.fill('');
      await page.getByRole('button', { name: 'Choose a still' }).click();
      const stills = page.getByRole('dialog', { name: 'Choose the cover still' });
      await stills.getByRole('button', { name: /Rotor height/ }).click();
      await stills.waitFor({ state: 'detached' });
      await preview.locator('img[alt="Cover still"]').waitFor();

      await waitSaved(page);
      expect(await saveState(page).innerText()).toMatch(/^Saved \d{2}:\d{2}$/);
      const first = await storedStory(storyId);
      expect(first.body).toContain('(clearance:pump-cover-gap)');
      expect(first.tags).toEqual({ machine: ['Vellum 1100'], component: [], operation: ['lapping'] });
      expect(first.coverMomentId).not.toBeNull();
      expect(first.summary).toBe('Pump body faced, rotors lapped, end float remeasured.');
      // The preview is sticky beside the text: shoot from the top so it sits where it starts.
      await page.evaluate(() => window.scrollTo(0, 0));
      await page.screenshot({ path: path.join(artifacts, 'story-editor-1280.png'), fullPage: true });

      // Reload: the text comes back from the server.
      await page.reload();
      await page.getByRole('heading', { name: 'Edit story' }).waitFor();
      expect(await page.getByLabel('Title').inputValue()).toBe('Oil pump: end float after lapping (test)');
      expect(await text.inputValue()).toContain('(clearance:end-float)');
      expect(await page.getByText(/Unsaved changes from/).count()).toBe(0);

      // A second tab saves first; the first tab's next change is refused and its text kept.
      const second = await browser.newPage();
      second.setDefaultTimeout(15_000);
      try {
        await second.goto(`${site.url}/stories/${storyId}/edit`);
        await second.getByRole('heading', { name: 'Edit story' }).waitFor();
        await second.getByLabel('Title').press('End');
        await second.keyboard.insertText(' — second tab');
        await waitSaved(second);
      } finally {
        await second.close();
      }
      await text.click();
      await text.press('Control+End');
      await page.keyboard.insertText('\n\nWritten in the first tab after the second saved.');
      await page.locator('[data-save-state="conflict"]').waitFor({ timeout: 15_000 });
      expect(await saveState(page).innerText()).toBe('Saved elsewhere — your text is kept here');
      expect(await text.inputValue()).toContain('Written in the first tab after the second saved.');
      expect((await storedStory(storyId)).body).not.toContain('Written in the first tab');
      await page.getByRole('button', { name: 'Show the other version beside mine' }).click();
      await page.getByText('The other version, as saved elsewhere — read-only').waitFor();
      expect(await preview.innerText()).toContain('second tab');
      await page.getByRole('button', { name: 'Keep mine and save it as the new version' }).click();
      await waitSaved(page);
      const kept = await storedStory(storyId);
      expect(kept.body).toContain('Written in the first tab after the second saved.');
      expect(kept.title).toBe('Oil pump: end float after lapping (test)');

      // Offline: kept on this device, saved when the connection is back.
      await browser.setOffline(true);
      await text.press('Control+End');
      await page.keyboard.insertText(' Offline line.');
      await page.locator('[data-save-state="offline"]').waitFor({ timeout: 15_000 });
      expect(await saveState(page).innerText()).toBe('Offline — kept on this device, will save when back');
      expect(await page.evaluate((id) => window.localStorage.getItem(`benchproof.story-draft.${id}`), storyId)).toContain('Offline line.');
      await browser.setOffline(false);
      await waitSaved(page);
      expect((await storedStory(storyId)).body).toContain('Offline line.');

      // A caution block from the menu; the preview boxes it and keeps the standing note at the foot.
      await text.press('Control+End');
      await page.getByRole('button', { name: 'Caution' }).click();
      await page.getByRole('menuitem', { name: 'Machining' }).click();
      await expect.poll(() => text.inputValue()).toContain(':::caution machining\n');
      await preview.locator('aside.caution[data-caution="machining"]').waitFor();
      expect(await preview.innerText()).toContain('The figures and procedures in this story are the builder’s own');

      // Images: a PNG is uploaded and inserted at the cursor; a file that is not an image is refused before sending.
      const png = path.join(work, 'pump-face.png');
      await ffmpegDirect(['-y', '-f', 'lavfi', '-i', 'color=c=gray:s=64x48', '-frames:v', '1', png]);
      const notImage = path.join(work, 'notes.txt');
      fs.writeFileSync(notImage, 'not an image');
      await text.press('Control+End');
      await page.locator('input[type=file][accept^="image/"]').setInputFiles([png, notImage]);
      await page.getByText('“notes.txt” is not a JPEG, PNG or WebP image').waitFor();
      await expect.poll(() => text.inputValue(), { timeout: 20_000 }).toMatch(/!\[[^\]]*\]\(\/api\/story-images\/\d+\)/);
      await preview.locator('img[src^="/api/story-images/"]').waitFor();
      await waitSaved(page);

      // Revision history: keep this version, then view it read-only in the preview.
      await page.getByRole('button', { name: 'Keep this version' }).click();
      const revisions = page.getByRole('list', { name: 'Revisions, newest first' });
      await revisions.locator('li', { hasText: 'kept' }).first().waitFor();
      await revisions.getByRole('button', { name: /View revision/ }).first().click();
      await page.getByText(/^Revision \d+ · kept by .+ — read-only$/).waitFor();
      await page.getByRole('button', { name: 'Back to my text' }).click();

      await page.evaluate(() => window.scrollTo(0, 0));
      await page.screenshot({ path: path.join(artifacts, 'story-editor-1280-full.png'), fullPage: true });

      // Narrow screen: Write and Preview are tabs.
      await page.setViewportSize({ width: 390, height: 844 });
      await page.getByRole('tab', { name: 'Write' }).waitFor();
      await page.evaluate(() => window.scrollTo(0, 0));
      await page.screenshot({ path: path.join(artifacts, 'story-editor-390-write.png'), fullPage: true });
      await page.getByRole('tab', { name: 'Preview' }).click();
      await page.evaluate(() => window.scrollTo(0, 0));
      await page.screenshot({ path: path.join(artifacts, 'story-editor-390-preview.png'), fullPage: true });
      await preview.locator('a.claim[data-claim="clearance:end-float"]').click();
      await page.getByRole('dialog', { name: 'End float' }).waitFor();
      await page.screenshot({ path: path.join(artifacts, 'story-editor-390-claim.png') });
      await page.keyboard.press('Escape');

      // Restoring the oldest revision puts its text into the editor, and it saves as the current text.
      await page.setViewportSize({ width: 1280, height: 900 });
      await revisions.getByRole('button', { name: /View revision/ }).last().click();
      await page.getByText(/^Revision 1 · autosave by .+ — read-only$/).waitFor();
      await page.getByRole('button', { name: 'Restore into the editor' }).click();
      await page.getByRole('dialog', { name: /Restore revision 1/ }).getByRole('button', { name: 'Restore it' }).click();
      await expect.poll(() => text.inputValue()).not.toContain('Offline line.');
      await waitSaved(page);
      expect((await storedStory(storyId)).body).toBe(await text.inputValue());

      // The diary lists the entry with its state and word count.
      await page.goto(`${site.url}/builds/${buildId}/stories`);
      const row = page.getByRole('row', { name: /Oil pump: end float after lapping/ });
      await row.waitFor();
      expect(await row.innerText()).toContain('draft');
      await page.screenshot({ path: path.join(artifacts, 'story-diary-1280.png'), fullPage: true });
    } finally {
      await browser.setOffline(false);
      await page.close();
    }
  }, 240_000);

  it('keeps text the server never received on this device and offers it when the entry is opened again', async () => {
    const story = await created(send('post', `/api/builds/${buildId}/stories`, { title: 'Crank end float (test)', body: 'Thrust washers fitted.' }), 'story');
    const storyId = (story as { story: { id: number } }).story.id;
    const editor = `${site.url}/stories/${storyId}/edit`;
    const cut = await browser.newPage();
    cut.setDefaultTimeout(15_000);
    try {
      await cut.goto(editor);
      await cut.getByRole('heading', { name: 'Edit story' }).waitFor();
      // Every save is cut off on the way, as on a dropped connection.
      await cut.route(`**/api/stories/${storyId}`, (route) => (route.request().method() === 'PATCH' ? route.abort('internetdisconnected') : route.continue()));
      await cut.getByLabel('Text (Markdown)').click();
      await cut.keyboard.press('Control+End');
      await cut.keyboard.insertText(' End float remeasured after fitting.');
      await cut.locator('[data-save-state="offline"]').waitFor();
    } finally {
      // Closed like a tab, without waiting for the page's own warning.
      await cut.close({ runBeforeUnload: false });
    }
    expect((await storedStory(storyId)).body).toBe('Thrust washers fitted.');

    const back = await browser.newPage();
    back.setDefaultTimeout(15_000);
    try {
      await back.goto(editor);
      await back.getByText(/^Unsaved changes from .+ are kept on this device$/).waitFor();
      await back.getByRole('button', { name: 'Restore them' }).click();
      expect(await back.getByLabel('Text (Markdown)').inputValue()).toBe('Thrust washers fitted. End float remeasured after fitting.');
      await waitSaved(back);
      expect((await storedStory(storyId)).body).toBe('Thrust washers fitted. End float remeasured after fitting.');
    } finally {
      await back.close();
    }
  }, 60_000);
});

describe('a builder sending an entry whose claim contradicts its figure', () => {
  it('is not offered “Send for review” until the claim is corrected, and is told what to change', async () => {
    // 0.9870 − 0.9823 = 0.0047 in; the text says 0.0062 in.
    const story = await created(
      send('post', `/api/builds/${buildId}/stories`, { title: 'End float, first try (test)', body: '[End float is 0.0062 in](clearance:end-float) after lapping.' }),
      'story',
    );
    const storyId = (story as { story: { id: number } }).story.id;
    await browser.clearCookies();
    const page = await browser.newPage();
    page.setDefaultTimeout(15_000);
    try {
      await page.goto(`${site.url}/auth/github?login=demo-builder&returnTo=${encodeURIComponent(`/stories/${storyId}/edit`)}`);
      await page.getByRole('heading', { name: 'Edit story' }).waitFor();
      const workflow = page.locator('[data-workflow-bar]');
      const sendIt = workflow.getByRole('button', { name: 'Send for review' });
      const gate = page.locator('[data-gate="submit"]');
      await gate.waitFor();
      expect(await sendIt.isDisabled()).toBe(true);
      expect(await sendIt.getAttribute('aria-describedby')).toBe(await gate.getAttribute('id'));
      expect(await gate.innerText()).toContain('It cannot be sent for review yet: 1 claim to correct:');
      expect(await gate.getByRole('list', { name: 'What to correct before sending' }).innerText()).toMatch(/Line 1: "End float is 0\.0062 in" — .*“0\.0062 in” means 0\.00615–0\.00625 in/);
      await page.screenshot({ path: path.join(artifacts, 'editor-send-blocked-1280.png') });

      // Corrected to the figure: the gate opens once the change is saved.
      const text = page.getByLabel('Text (Markdown)');
      await text.fill('[End float is 0.0047 in](clearance:end-float) after lapping.');
      await waitSaved(page);
      await gate.waitFor({ state: 'detached' });
      expect(await sendIt.isDisabled()).toBe(false);
    } finally {
      await page.close();
    }
  }, 60_000);
});
