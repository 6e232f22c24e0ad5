import nodemailer from 'nodemailer';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createFakeSmtp, type FakeSmtp } from '../../../server/fakes/smtp/fake-smtp';

let fake: FakeSmtp;
let urls: { smtpUrl: string; apiUrl: string };

beforeAll(async () => {
  fake = createFakeSmtp();
  urls = await fake.listen();
});
afterAll(async () => {
  await fake?.close();
});

function transport() {
  return nodemailer.createTransport({ url: urls.smtpUrl, connectionTimeout: 2000, greetingTimeout: 2000 } as never);
}

describe('the local mail capture server', () => {
  it('keeps a message sent over SMTP with both parts, the envelope and its headers, and lists it over its API', async () => {
    await transport().sendMail({
      from: 'Benchproof <mail@benchproof.test>',
      to: 'sam@example.test',
      bcc: 'hidden@example.test',
      subject: 'A new diary entry (test)',
      text: 'Plain part',
      html: '<p>HTML part</p>',
      headers: { 'List-Unsubscribe': '<http://127.0.0.1/unsubscribe?t=abc>', 'List-Unsubscribe-Post': 'List-Unsubscribe=One-Click' },
    });
    const [m] = await fake.waitFor((x) => x.subject === 'A new diary entry (test)');
    expect(m!.text.trim()).toBe('Plain part');
    expect(m!.html).toContain('<p>HTML part</p>');
    expect(m!.to).toEqual(['sam@example.test']);
    expect(m!.envelope.to.sort()).toEqual(['hidden@example.test', 'sam@example.test']);
    expect(m!.headers['list-unsubscribe']).toBe('<http://127.0.0.1/unsubscribe?t=abc>');
    expect(m!.headers['list-unsubscribe-post']).toBe('List-Unsubscribe=One-Click');

    const listed = (await (await fetch(`${urls.apiUrl}/messages`)).json()) as { items: { id: string; subject: string }[] };
    expect(listed.items[0]!.subject).toBe('A new diary entry (test)');
    const one = await fetch(`${urls.apiUrl}/messages/${listed.items[0]!.id}`);
    expect(one.status).toBe(200);
    expect((await fetch(`${urls.apiUrl}/messages/nope`)).status).toBe(404);
  });

  it('refuses connections while its SMTP side is down and accepts again when it is back on the same port', async () => {
    await fake.stopSmtp();
    await expect(transport().sendMail({ from: 'a@b.test', to: 'c@d.test', subject: 'while down', text: 'x' })).rejects.toThrow();
    await fake.startSmtp();
    await transport().sendMail({ from: 'a@b.test', to: 'c@d.test', subject: 'after coming back', text: 'x' });
    await fake.waitFor((x) => x.subject === 'after coming back');
    expect(fake.messages.some((x) => x.subject === 'while down')).toBe(false);
  });

  it('empties its list on DELETE /messages', async () => {
    const res = await fetch(`${urls.apiUrl}/messages`, { method: 'DELETE' });
    expect(res.status).toBe(204);
    expect(fake.messages).toHaveLength(0);
  });
});
