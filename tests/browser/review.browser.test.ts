import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import type { Page } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { readingResponseSchema } from '@shared/readings/reading.schema';
import { launchBrowser } from '../../scripts/lib/chromium';
import { repoRoot } from '../../scripts/lib/bootstrap';
import type { ClearanceResult } from '@shared/clearances/clearance.schema';
import { Follow } from '../../server/features/follows/follow.model';
import { listeningOf, storeClipWords } from '../../server/features/speech/speech.service';
import type { PublishedEvidence } from '../../server/features/public/publication';
import { StoryPublication } from '../../server/features/review/review.model';
import { Story } from '../../server/features/stories/story.model';
import { User } from '../../server/features/users/user.model';
import { startBrowserApp } from '../support/browser-app';
import { makeTestClip } from '../support/clips';
import { sessionFor, type Session } from '../support/matrix-fixtures';
import { fixtureBody, makeReviewFixture, move, publishThroughReview, sessionWithRole, type ReviewFixture } from '../support/review-fixtures';

let site: Awaited<ReturnType<typeof startBrowserApp>>;
let browser: Awaited<ReturnType<typeof launchBrowser>>;
let work: string;
let owner: Session;
let fixture: ReviewFixture;
let feelerReadingId: number;
/** A second story, published through review (revision 1), for the follower's mail and the republication below. */
let second: ReviewFixture;
const artifacts = path.join(repoRoot, 'tests/artifacts');
const TITLE = 'Invented flat-twin oil pump (review screen test)';
const FLAG_COMMENT = 'the blade shown is not the one logged';
const REASON = 'The feeler blade in the still is not the one logged: re-film the bracket or correct the reading.';
// Where the bracket is taken in the clip; the player should start 3 s before it.
const FEELER_AT_MS = 3800;

async function signInAs(page: Page, login: string, returnTo: string) {
  await browser.clearCookies();
  await page.goto(`${site.url}/auth/github?login=${login}&returnTo=${encodeURIComponent(returnTo)}`);
}

beforeAll(async () => {
  work = fs.mkdtempSync(path.join(os.tmpdir(), 'benchproof-browser-review-'));
  site = await startBrowserApp({ jobs: true, mail: true });
  browser = await launchBrowser();
  fs.mkdirSync(artifacts, { recursive: true });
  owner = await sessionFor(site, 'owner');
  const clipFile = await makeTestClip({ seconds: 5, format: 'mp4-h264', dir: work, name: 'pump-review' });

  // The story under review: the fixture's two claims plus a feeler bracket the moderator will flag.
  fixture = await makeReviewFixture(owner, {
    clipFile,
    title: TITLE,
    body: fixtureBody({ extra: '[The outer rotor took the 0.004 in blade but not the 0.005 in](reading:rotor-to-body) in the body.' }),
  });
  const send = (url: string, body: object) => owner.agent.post(url).set('x-csrf-token', owner.token).send(body);
  const moment = await send(`/api/clips/${fixture.clipId}/moments`, { atMs: FEELER_AT_MS, label: 'Feeler blade between outer rotor and body' });
  expect(moment.status).toBe(201);
  // Past its calibration date on the day of the reading, so the screen has a warning to show.
  const blades = await send('/api/instruments', {
    name: 'Feeler blade set 0.0015–0.025 in (test)',
    kind: 'feeler-blades',
    serial: 'INV-FB-01',
    unit: 'in',
    resolution: '0.0005',
    lastCalibratedOn: '2024-01-10',
    calibrationIntervalDays: 365,
  });
  expect(blades.status).toBe(201);
  const feeler = await send(`/api/builds/${fixture.buildId}/readings`, {
    momentId: moment.body.moment.id,
    instrumentId: blades.body.instrument.id,
    key: 'rotor-to-body',
    name: 'Outer rotor to body',
    kind: 'bracket',
    passes: '0.004',
    stops: '0.005',
    takenOn: '2026-11-20',
  });
  expect(feeler.status).toBe(201);
  feelerReadingId = readingResponseSchema.parse(feeler.body).reading.id;
  expect((await move(owner, fixture.story.id, 'submit')).status).toBe(200);

  // A second story, published through review, so a follower of the builder gets a mail with an unsubscribe link.
  const [follower, builder] = await Promise.all([User.findOne({ where: { login: 'demo-follower' } }), User.findOne({ where: { login: 'demo-builder' } })]);
  await Follow.upsert({ followerId: follower!.id, builderId: builder!.id, emailOnPublish: true });
  second = await makeReviewFixture(owner, { clipFile, title: 'Invented flat-twin crank (published for the outbox test)' });
  await publishThroughReview(owner, await sessionFor(site, 'moderator'), second);

  // What the builder said on the clip, stored as the listening worker would once it has finished
  // with the clip's sound: the depth as logged, the height a tenth off, the bracket as logged.
  for (const end = Date.now() + 90_000; ['pending', 'listening'].includes((await listeningOf(fixture.clipId))?.state ?? 'pending'); ) {
    if (Date.now() > end) throw new Error('the fixture clip was not listened to within 90 s');
    await new Promise((r) => setTimeout(r, 250));
  }
  const said = (text: string, atMs: number) => text.split(' ').map((word, i) => ({ word, startMs: atMs + i * 120, endMs: atMs + i * 120 + 100, confidence: 0.8 }));
  await storeClipWords(fixture.clipId, [
    ...said('five hundred sixty four and two tenths', 200),
    ...said('point five five nine four', 1_300),
    // More than 1.5 s after the height's last word, so the bracket is a phrase of its own.
    ...said("four thou slides five thou won't go", 3_500),
  ]);
}, 300_000);

afterAll(async () => {
  await browser?.dispose();
  await site?.close();
  fs.rmSync(work, { recursive: true, force: true });
});

describe('a moderator checking a story against the footage', () => {
  it('takes it from the queue, checks a reading by key, flags the bracket with a comment, sees what stops publishing, is refused a publish, and asks for changes', async () => {
    const page = await browser.newPage();
    page.setDefaultTimeout(15_000);
    try {
      await signInAs(page, 'demo-moderator', '/review');
      await page.getByRole('heading', { name: 'Review queue' }).waitFor();
      const row = page.locator(`[data-queue-story="${fixture.story.id}"]`);
      await row.waitFor();
      const rowText = await row.innerText();
      expect(rowText).toContain(`${TITLE}: end float`);
      expect(rowText).toContain('Ines Calloway');
      // Cited: bore depth and the bracket directly, rotor height through the clearance.
      expect(rowText).toContain('Relies on 3 readings and 1 clearance');
      expect(rowText).toContain('4 left to check');
      expect(rowText).toContain('Not taken by anyone');
      await page.screenshot({ path: path.join(artifacts, 'review-queue-1280.png'), fullPage: true });

      // Another moderator takes it first: the refusal says who holds it; once they let go it can be taken.
      const other = await sessionWithRole(site, 'moderator');
      const otherName = (await other.agent.get('/api/me').expect(200)).body.user.displayName as string;
      await other.agent.post(`/api/review/stories/${fixture.story.id}/claim`).set('x-csrf-token', other.token).expect(200);
      await row.getByRole('button', { name: 'Take for review' }).click();
      const taken = row.getByRole('alert');
      await taken.waitFor();
      expect(await taken.innerText()).toMatch(new RegExp(`^Taken already: ${otherName} is checking this story until \\d{2}:\\d{2} UTC\\.$`));
      await row.locator(`[data-claim-holder="${otherName}"]`).waitFor();
      await other.agent.delete(`/api/review/stories/${fixture.story.id}/claim`).set('x-csrf-token', other.token).expect(204);
      await page.getByRole('button', { name: 'Refresh' }).click();
      await row.locator('[data-claim-holder=""]').waitFor();

      await row.getByRole('button', { name: 'Take for review' }).click();
      await page.waitForURL(`**/review/stories/${fixture.story.id}`);
      await page.getByRole('heading', { name: `${TITLE}: end float`, level: 1 }).waitFor();
      await page.locator('[data-claim-box="mine"]').waitFor();

      const option = (key: string) => page.locator(`[role="option"][data-evidence-id="${key}"]`);
      const depthId = `reading:${fixture.readings.depth.id}`;
      const heightId = `reading:${fixture.readings.height.id}`;
      const feelerId = `reading:${feelerReadingId}`;
      expect(await option(depthId).getAttribute('aria-selected')).toBe('true');
      expect(await page.locator('[data-current] [data-entered]').innerText()).toBe('0.5642 in');
      // The second witness beside the still: what the builder said near the moment, a calm line when it agrees.
      const agrees = page.locator('[data-current] [data-heard="agrees"]');
      await agrees.waitFor();
      expect(await agrees.innerText()).toContain(
        'Heard on the clip: ‘five hundred sixty four and two tenths’ at 0:00.2 → 564.2 thou = 0.5642 in: agrees with the logged 0.5642 in.',
      );
      // The clip's captions are on the moderator's player, off until chosen.
      const captions = await page.locator('[data-current] video').evaluate((v: HTMLVideoElement) => {
        const track = v.querySelector('track');
        return { kind: track?.kind, srclang: track?.srclang, label: track?.label, src: track?.getAttribute('src'), mode: v.textTracks[0]?.mode };
      });
      expect(captions).toEqual({
        kind: 'captions',
        srclang: 'en',
        label: "English (from the clip's sound)",
        src: `/api/clips/${fixture.clipId}/captions.vtt`,
        mode: 'disabled',
      });
      // The height was said a tenth off: its row is marked, and its line says what was heard and what was logged.
      await option(heightId).locator('[data-heard-differs]').waitFor();
      expect(await option(depthId).locator('[data-heard-differs]').count()).toBe(0);

      // c marks the reading on screen checked and moves on to the next that needs a look.
      await page.locator('body').press('c');
      await page.locator(`[role="option"][data-evidence-id="${depthId}"][data-evidence-state="checked"]`).waitFor();
      await expect.poll(() => option(heightId).getAttribute('aria-selected')).toBe('true');
      const differs = page.locator('[data-current] [data-heard="disagrees"]');
      await differs.waitFor();
      expect(await differs.innerText()).toContain(
        'Heard on the clip, not what was logged: ‘point five five nine four’ (no unit said) at 0:01.3 → 0.5594 in (the closest of 2 figures heard): disagrees with the logged 0.5595 in.',
      );
      await differs.scrollIntoViewIfNeeded();
      await page.screenshot({ path: path.join(artifacts, 'review-heard-differs-1280.png') });
      await page.setViewportSize({ width: 390, height: 844 });
      await page.locator('[data-current] [data-heard="disagrees"]').scrollIntoViewIfNeeded();
      await page.screenshot({ path: path.join(artifacts, 'review-heard-differs-390.png') });
      await page.setViewportSize({ width: 1280, height: 860 });
      // "Listen from" plays the clip, sound on, from where the figure was said.
      await differs.getByRole('button', { name: 'Listen from 0:01.3' }).click();
      await page.waitForFunction(() => {
        const v = document.querySelector<HTMLVideoElement>('[data-current] video');
        return v !== null && !v.muted && v.currentTime >= 1.3;
      });

      // j moves down to the feeler bracket; its clip starts 3 s before the moment.
      await page.locator('body').press('j');
      await expect.poll(() => option(feelerId).getAttribute('aria-selected')).toBe('true');
      const current = page.locator('[data-current]');
      expect(await current.innerText()).toContain('0.004 in enters · 0.005 in does not');
      await current.locator('[data-heard="agrees"]').waitFor();
      await current.locator('[data-calibration="overdue"]').waitFor();
      await page.waitForFunction(() => {
        const v = document.querySelector<HTMLVideoElement>('[data-current] video');
        return v !== null && v.readyState >= 1 && v.currentTime > 0.5;
      });
      const started = await current.locator('video').evaluate((v: HTMLVideoElement) => ({ lead: Number(v.dataset.leadInS), at: v.currentTime }));
      expect(started.lead).toBeCloseTo(0.8, 6);
      expect(started.at).toBeGreaterThanOrEqual(0.75);
      // The lead-up stops on the moment: the clip shows the frame of the still beside it.
      await page.waitForFunction(
        (at) => {
          const v = document.querySelector<HTMLVideoElement>('[data-current] video');
          return v !== null && v.paused && Math.abs(v.currentTime - at) < 0.01;
        },
        FEELER_AT_MS / 1000,
        { timeout: 15_000 },
      );

      // f asks for a comment; an empty one is refused beside the field by the shared schema.
      await page.locator('body').press('f');
      const dialog = page.getByRole('dialog', { name: 'Flag “Outer rotor to body”' });
      await dialog.waitFor();
      await dialog.getByRole('button', { name: 'Flag it' }).click();
      await dialog.getByText('say what is wrong (at least 3 characters)').waitFor();
      await dialog.getByLabel('What is wrong').fill(FLAG_COMMENT);
      await dialog.getByRole('button', { name: 'Flag it' }).click();
      await dialog.waitFor({ state: 'detached' });
      await page.locator(`[role="option"][data-evidence-id="${feelerId}"][data-evidence-state="flagged"]`).waitFor();

      // The blockers list is worked out again: the flag, and what is still unchecked.
      const blockers = page.getByRole('list', { name: 'What stops publishing' });
      await blockers.locator('[data-blocker="flagged"]').waitFor();
      expect(await blockers.locator('[data-blocker="flagged"]').innerText()).toContain(FLAG_COMMENT);
      expect(await blockers.locator('[data-blocker="unchecked"]').count()).toBe(2);
      // The record shows the check and the flag.
      await page.locator('[data-audit-action="check.flagged"]').waitFor();
      expect(await page.locator('[data-audit-action="check.checked"]').count()).toBe(1);

      await page.evaluate(() => window.scrollTo(0, 0));
      await page.screenshot({ path: path.join(artifacts, 'review-screen-1280.png'), fullPage: true });
      await page.setViewportSize({ width: 390, height: 844 });
      await page.evaluate(() => window.scrollTo(0, 0));
      await page.screenshot({ path: path.join(artifacts, 'review-screen-390.png'), fullPage: true });
      await page.setViewportSize({ width: 1280, height: 860 });

      // Publishing is not offered while anything stops it: the button is disabled and says why, before it is pressed.
      const workflow = page.locator('[data-workflow-bar]');
      const publish = workflow.getByRole('button', { name: 'Publish' });
      expect(await publish.isDisabled()).toBe(true);
      const gate = workflow.locator('[data-gate="publish"]');
      expect(await gate.innerText()).toBe('It cannot be published yet: 3 problems to resolve, listed under “What stops publishing”.');
      expect(await publish.getAttribute('aria-describedby')).toBe(await gate.getAttribute('id'));

      // Asking for changes needs a reason.
      await workflow.getByRole('button', { name: 'Ask for changes…' }).click();
      const ask = page.getByRole('dialog', { name: 'Ask the builder for changes' });
      await ask.getByRole('button', { name: 'Ask for changes' }).click();
      await ask.getByText('Give a reason (at least 3 characters)').waitFor();
      await ask.getByLabel('Reason').fill(REASON);
      await ask.getByRole('button', { name: 'Ask for changes' }).click();
      await ask.waitFor({ state: 'detached' });
      await workflow.locator('[data-story-state="changes-requested"]').waitFor();
      await page.locator('[data-audit-action="story.request-changes"]').waitFor();
      // The record reads as sentences; the stored fields are for admins.
      expect(await page.locator('[data-audit-action="story.request-changes"]').innerText()).toMatch(
        /Dagny Orlov sent the story back for changes at \d{2}:\d{2}: “The feeler blade in the still/,
      );
      expect(await page.locator('[data-audit-action="check.flagged"]').innerText()).toMatch(/Dagny Orlov flagged the reading “Outer rotor to body” at \d{2}:\d{2}: “the blade shown/);
      expect(await page.locator('[data-audit-record]').count()).toBe(0);
      expect(await page.getByText('lockVersion').count()).toBe(0);

      // A key that can do nothing now says why.
      await page.locator('body').press('c');
      const told = page.locator('li').filter({ hasText: 'Nothing was checked' }).first();
      await told.waitFor();
      expect(await told.innerText()).toContain('this one is back with its builder for changes');
    } finally {
      await page.close();
    }
  }, 120_000);
});

describe('the builder after changes were asked for', () => {
  it('sees the flag with the moderator’s comment on the review sheet and answers it', async () => {
    const page = await browser.newPage();
    page.setDefaultTimeout(15_000);
    try {
      // In the workspace: the flag under the reading it concerns, with the story it came from and a box to answer.
      await signInAs(page, 'demo-builder', `/builds/${fixture.buildId}`);
      const note = page.locator('[data-flag-note="reading:rotor-to-body"]').first();
      await note.waitFor();
      expect(await note.innerText()).toContain(FLAG_COMMENT);
      expect(await note.innerText()).toContain('Flagged by Dagny Orlov');
      await note.getByRole('button', { name: 'Answer the flag on Outer rotor to body' }).click();
      await note.getByLabel(/Your answer/).waitFor();
      await note.scrollIntoViewIfNeeded();
      await page.screenshot({ path: path.join(artifacts, 'workspace-flag-1280.png') });

      // In the editor: the moderator's reason first, then the flag.
      await page.goto(`${site.url}/stories/${fixture.story.id}/edit`);
      const asked = page.locator('section[data-changes-requested]');
      await asked.waitFor();
      expect(await asked.locator('[data-changes-reason]').innerText()).toBe(REASON);
      expect(await asked.innerText()).toContain('— Dagny Orlov');
      await asked.locator('[data-flag="reading:rotor-to-body"]').waitFor();
      await page.screenshot({ path: path.join(artifacts, 'editor-changes-requested-1280.png') });

      await page.goto(`${site.url}/review/stories/${fixture.story.id}`);
      await page.getByRole('heading', { name: `${TITLE}: end float`, level: 1 }).waitFor();
      expect(await page.locator('[data-changes-reason]').innerText()).toBe(REASON);
      const flags = page.getByRole('list', { name: 'Flags to answer' });
      const flag = flags.locator('[data-flag="reading:rotor-to-body"]');
      await flag.waitFor();
      expect(await flag.innerText()).toContain(FLAG_COMMENT);
      expect(await flag.innerText()).toContain('Dagny Orlov');
      expect(await flags.locator('li').count()).toBe(1);
      // The builder has no check buttons here.
      expect(await page.getByRole('button', { name: /^Checked/ }).count()).toBe(0);

      await flag.getByRole('button', { name: 'Send answer' }).click();
      await flag.getByText('write an answer (at least 3 characters)').waitFor();
      await flag.getByLabel(/Your answer/).fill('Re-filmed the bracket at 0:04: the 0.004 in blade is the one in the still now.');
      await flag.getByRole('button', { name: 'Send answer' }).click();
      await flag.getByRole('list', { name: 'Answers to the flag on Outer rotor to body' }).getByText('Re-filmed the bracket').waitFor();
      // Sending it again is the builder's move from here.
      await page.locator('[data-workflow-bar]').getByRole('button', { name: 'Send for review' }).waitFor();
      await page.screenshot({ path: path.join(artifacts, 'review-builder-1280.png'), fullPage: true });
    } finally {
      await page.close();
    }
  }, 60_000);
});

describe('the admin outbox and the unsubscribe page', () => {
  it('lists the captured messages newest first, opens one with both parts and its List-Unsubscribe header, and the link in it stops the mail', async () => {
    // Mail goes through the job queue; wait until the capture server has what the page should list.
    // Messages are picked by what they say, not by their subject lines' exact words.
    const [changesMail] = await site.smtp.waitFor((m) => m.to.includes('ines@marrow-and-vane.example') && m.text.includes(REASON));
    const [waitingMail] = await site.smtp.waitFor((m) => m.to.includes('dagny@orlov-inspection.example') && m.text.includes(`/review/stories/${fixture.story.id}`));
    const [followerMail] = await site.smtp.waitFor((m) => 'list-unsubscribe' in m.headers && m.to.includes('sam@okafor-garage.example'));
    const page = await browser.newPage();
    page.setDefaultTimeout(15_000);
    try {
      await signInAs(page, 'demo-admin', '/admin/outbox');
      await page.getByRole('heading', { name: 'Outbox', level: 1 }).waitFor();
      const list = page.getByRole('list', { name: /Captured messages, newest first/ });
      await list.waitFor();
      const subjects = await list.locator('[data-outbox-row]').evaluateAll((rows) => rows.map((r) => r.getAttribute('data-outbox-row')));
      expect(subjects).toContain(waitingMail!.subject);
      // The last mail sent (changes asked for) is at the top.
      expect(subjects[0]).toBe(changesMail!.subject);

      await list.locator(`[data-outbox-row="${changesMail!.subject}"]`).click();
      const message = page.locator('article[data-message]');
      await message.waitFor();
      const frame = message.locator('iframe');
      expect(await frame.getAttribute('sandbox')).toBe('');
      expect(await frame.getAttribute('srcdoc')).toContain(`Reason: ${REASON}`);
      expect(await message.locator('pre').innerText()).toContain(FLAG_COMMENT);
      // The HTML renders in its own frame (the page's CSP lets it draw), never in this page.
      await message.frameLocator('iframe').getByText(`Reason: ${REASON}`).waitFor();
      expect(await page.locator('main p', { hasText: 'Hello Ines Calloway' }).count()).toBe(0);
      // The sandboxed frame lays itself out on its own: size the window to the whole page first (a
      // full-page capture resizes it mid-shot), then let the frame settle before the picture.
      const height = await page.evaluate(() => document.documentElement.scrollHeight);
      await page.setViewportSize({ width: 1280, height });
      await message.frameLocator('iframe').getByText(`Reason: ${REASON}`).waitFor();
      await page.evaluate(() => new Promise((resolve) => requestAnimationFrame(() => requestAnimationFrame(resolve))));
      await page.screenshot({ path: path.join(artifacts, 'review-outbox-1280.png') });
      await page.setViewportSize({ width: 1280, height: 860 });

      // Other test files may make more followers of the shared demo builder: the row sent to this follower.
      await list.locator(`[data-outbox-row="${followerMail!.subject}"]`).filter({ hasText: 'sam@okafor-garage.example' }).click();
      const header = message.locator('[data-list-unsubscribe]');
      await expect.poll(() => header.getAttribute('data-list-unsubscribe')).toMatch(/^<http:\/\/127\.0\.0\.1:\d+\/api\/unsubscribe\?token=/);
      expect(await message.innerText()).toContain('List-Unsubscribe=One-Click');

      // The page link from the follower's mail, opened signed out.
      const link = /(http:\/\/\S+\/unsubscribe\?token=\S+)/.exec(followerMail!.text)?.[1];
      expect(link).toBeTruthy();
      await browser.clearCookies();
      await page.setViewportSize({ width: 390, height: 844 });
      await page.goto(link!);
      await page.getByRole('heading', { name: 'Stop e-mails from Ines Calloway to Sam Okafor?' }).waitFor();
      await page.screenshot({ path: path.join(artifacts, 'review-unsubscribe-390.png') });
      await page.getByRole('button', { name: 'Stop these e-mails' }).click();
      await page.getByRole('heading', { name: 'Done: no more e-mails from Ines Calloway to Sam Okafor' }).waitFor();
      const [follower, builder] = await Promise.all([User.findOne({ where: { login: 'demo-follower' } }), User.findOne({ where: { login: 'demo-builder' } })]);
      expect((await Follow.findOne({ where: { followerId: follower!.id, builderId: builder!.id } }))?.emailOnPublish).toBe(false);

      // A link that was cut or changed is explained, and nothing changes.
      await page.goto(`${site.url}/unsubscribe?token=${'x'.repeat(24)}.changed`);
      await page.getByRole('heading', { name: 'This unsubscribe link does not work' }).waitFor();
      expect(await page.locator('[data-unsubscribe="invalid"]').innerText()).toContain('not valid');
    } finally {
      await page.close();
    }
  }, 90_000);
});

// Journey 2 ends here: the builder resubmits, the moderator checks what is left and publishes, and the builder is told.
describe('the builder resubmits and the moderator publishes', () => {
  it('sends the answered story back, the moderator checks each remaining reading and the clearance and publishes it, and the builder gets the mail', async () => {
    const page = await browser.newPage();
    page.setDefaultTimeout(15_000);
    try {
      await signInAs(page, 'demo-builder', `/review/stories/${fixture.story.id}`);
      const bar = page.locator('[data-workflow-bar]');
      await bar.getByRole('button', { name: 'Send for review' }).click();
      const confirm = page.getByRole('dialog');
      if (await confirm.count()) await confirm.getByRole('button', { name: 'Send for review' }).click();
      await bar.locator('[data-story-state="in-review"]').waitFor();

      await browser.clearCookies();
      await signInAs(page, 'demo-moderator', '/review');
      const row = page.locator(`[data-queue-story="${fixture.story.id}"]`);
      await row.getByRole('button', { name: 'Take for review' }).click();
      await page.waitForURL(`**/review/stories/${fixture.story.id}`);
      await page.locator('[data-claim-box="mine"]').waitFor();
      // Everything not checked at its current version gets a look and a check (c), the flagged bracket included.
      const pending = page.locator('[role="option"][data-evidence-id]:not([data-evidence-state="checked"])');
      for (let guard = 0; guard < 10 && (await pending.count()) > 0; guard += 1) {
        const next = pending.first();
        const id = await next.getAttribute('data-evidence-id');
        await next.click();
        await expect.poll(() => page.locator(`[role="option"][data-evidence-id="${id}"]`).getAttribute('aria-selected')).toBe('true');
        await page.locator('body').press('c');
        await page.locator(`[role="option"][data-evidence-id="${id}"][data-evidence-state="checked"]`).waitFor();
      }
      const workflow = page.locator('[data-workflow-bar]');
      await workflow.getByRole('button', { name: 'Publish' }).click();
      await page.getByRole('dialog', { name: 'Publish this story?' }).getByRole('button', { name: 'Publish' }).click();
      await workflow.locator('[data-story-state="published"]').waitFor();
      // The moderator is one click from what the public now sees.
      const link = workflow.locator('[data-public-link] a');
      expect(await link.getAttribute('href')).toBe(`/stories/${fixture.story.id}`);
      expect(await workflow.locator('[data-public-link]').innerText()).toContain('Revision 1 is public.');
      await page.screenshot({ path: path.join(artifacts, 'journey-moderator-last.png') });
      const [published] = await site.smtp.waitFor((m) => m.to.includes('ines@marrow-and-vane.example') && m.subject.startsWith('Published') && m.text.includes(`/stories/${fixture.story.id}`));
      expect(published!.html).toContain(`/stories/${fixture.story.id}`);

      // Readers see, beside the bore depth's figure, that the builder was heard saying it on the clip.
      await page.goto(`${site.url}/stories/${fixture.story.id}/claims/reading:bore-depth`);
      const heard = page.locator('#claim-panel [data-claim-evidence="reading:bore-depth"] [data-reading="bore-depth"] [data-heard-on-clip]');
      await heard.waitFor();
      expect(await heard.innerText()).toBe('Heard on the clip: “five hundred sixty four and two tenths” at 0:00.2, the figure logged.');
      await heard.scrollIntoViewIfNeeded();
      await page.screenshot({ path: path.join(artifacts, 'public-heard-on-clip-1280.png') });
    } finally {
      await page.close();
    }
  }, 120_000);
});

/**
 * Rewrites a clearance's result in a story's current publication as the first engine judged it
 * (always k = 2, no method): a stand-in for a publication made before the engine changed. The
 * append-only trigger is off only inside the transaction (DDL is transactional in PostgreSQL).
 */
async function judgeAsTheFirstEngine(storyId: number, clearanceId: number, older: (r: ClearanceResult) => ClearanceResult): Promise<void> {
  const story = (await Story.findByPk(storyId))!;
  const sequelize = StoryPublication.sequelize!;
  await sequelize.transaction(async (transaction) => {
    const publication = (await StoryPublication.findByPk(story.publishedPublicationId!, { transaction }))!;
    const evidence = structuredClone(publication.evidence) as unknown as PublishedEvidence;
    evidence.clearances = evidence.clearances.map((c) => (c.id === clearanceId ? { ...c, result: older(c.result!) } : c));
    await sequelize.query('ALTER TABLE story_publications DISABLE TRIGGER story_publications_append_only', { transaction });
    await publication.update({ evidence: evidence as unknown as Record<string, unknown> }, { transaction });
    await sequelize.query('ALTER TABLE story_publications ENABLE TRIGGER story_publications_append_only', { transaction });
  });
}

describe('a published story sent for review again after the engine changed', () => {
  it('shows the moderator, beside the clearance and in the list, what differs from the published judgement, with the budget and how the interval was found', async () => {
    // Revision 1 was judged too close to call at k = 2 (invented: U = 8 µm); the engine now finds it within spec.
    await judgeAsTheFirstEngine(second.story.id, second.clearance.id, (r) => {
      const { method: _m, coverageProbability: _p, fixedCoverageFactor: _f, effectiveDegreesOfFreedom: _n, intervalUm: _i, probabilityOfConformance: _c, budget: _b, warnings: _w, ...first } = r;
      return { ...first, coverageFactor: 2, standardUncertaintyUm: 4, expandedUncertaintyUm: 8, display: '0.0047 in ± 0.00031 in (k = 2)', verdict: 'undecided' };
    });
    expect((await move(owner, second.story.id, 'submit')).status).toBe(200);

    const page = await browser.newPage();
    page.setDefaultTimeout(15_000);
    try {
      await signInAs(page, 'demo-moderator', `/review/stories/${second.story.id}`);
      await page.getByRole('heading', { name: `${second.story.title}`, level: 1 }).waitFor();
      const row = page.locator(`[role="option"][data-evidence-id="clearance:${second.clearance.id}"]`);
      // The list says so in words beside the mark, not by colour alone.
      expect(await row.locator('[data-differs-from-revision="1"]').innerText()).toBe('differs from published revision 1');
      await row.click();

      const current = page.locator('[data-current]');
      const note = current.getByRole('region', { name: 'Differs from the published revision 1' });
      await note.waitFor();
      expect(await note.getAttribute('data-published-change')).toBe('changed');
      expect(await note.locator('[data-change-text]').innerText()).toMatch(
        /^Within spec now; too close to call when published \(revision 1\)\. U is 0\.\d+ in now, 0\.00031 in when published: the engine now works out a 95 % interval instead of k = 2\.$/,
      );
      const published = note.locator('[data-as-published]');
      expect(await published.innerText()).toContain('0.0047 in ± 0.00031 in (k = 2)');
      expect(await published.innerText()).toContain('judged by the earlier engine');
      expect(await published.locator('[data-verdict="undecided"]').count()).toBe(1);

      // How the interval was found now, the probability within spec, and the budget laid open.
      const coverage = current.locator('[data-coverage]');
      expect(await coverage.locator('[data-interval]').innerText()).toMatch(/^95 % interval 0\.\d+ in to 0\.\d+ in \((Monte Carlo, JCGM 101|GUM, t with ν_eff = [\d.∞]+)\)$/);
      expect(await coverage.locator('[data-probability-within]').innerText()).toMatch(/^Probability within spec: [<>\d.\s]+ %$/);
      const budget = current.getByRole('region', { name: 'Uncertainty budget' });
      // textContent: innerText would carry the headers' CSS capitals.
      const headers = (await budget.locator('thead th').allTextContents()).map((x) => x.replace(/\s+/g, ' ').trim().toLowerCase());
      for (const h of ['source', 'distribution', 'std. uncertainty u', 'sensitivity c', 'contribution', 'share of variance']) {
        expect(headers, h).toEqual(expect.arrayContaining([expect.stringMatching(new RegExp(`^${h.replace('.', '\\.')}`))]));
      }
      expect(await budget.locator('tbody tr').count()).toBeGreaterThanOrEqual(2);

      await note.scrollIntoViewIfNeeded();
      await page.screenshot({ path: path.join(artifacts, 'review-republish-change-1280.png'), fullPage: true });
    } finally {
      await page.close();
    }
  }, 90_000);
});
