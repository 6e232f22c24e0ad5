import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { enqueueMail } from '../../../server/mail/mail.job';
import { startTestApp, type TestApp } from '../../support/test-app';

let t: TestApp;
beforeAll(async () => {
  t = await startTestApp({}, { jobs: true, mail: true });
});
afterAll(async () => {
  await t?.close();
});

const message = (subject: string) => ({
  to: 'follower@example.test',
  subject,
  text: `Plain: ${subject}`,
  html: `<p>HTML: ${subject}</p>`,
  kind: 'test',
});

describe('sending mail through the job queue', () => {
  it('a queued message reaches the mail server with its plain-text and HTML parts', async () => {
    expect(await enqueueMail(t.queue, [message('queued once (test)')])).toBe(1);
    const [m] = await t.smtp.waitFor((x) => x.subject === 'queued once (test)');
    expect(m!.from).toBe('mail@benchproof.invalid');
    expect(m!.text.trim()).toBe('Plain: queued once (test)');
    expect(m!.html).toContain('<p>HTML: queued once (test)</p>');
  });

  it('while the mail server is down the message waits, and it is sent once the server is back', async () => {
    await t.smtp.stopSmtp();
    await enqueueMail(t.queue, [message('sent after an outage (test)')]);
    // Long enough for at least one failed attempt (the retry delay is 1 s in tests).
    await new Promise((r) => setTimeout(r, 2500));
    expect(t.smtp.messages.some((x) => x.subject === 'sent after an outage (test)')).toBe(false);
    await t.smtp.startSmtp();
    const found = await t.smtp.waitFor((x) => x.subject === 'sent after an outage (test)', 1, 30_000);
    expect(found).toHaveLength(1);
  }, 45_000);
});
