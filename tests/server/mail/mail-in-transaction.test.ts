import { QueryTypes } from 'sequelize';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { enqueueMail, type OutgoingMail } from '../../../server/mail/mail.job';
import { startTestApp, type TestApp } from '../../support/test-app';

/*
 * Mail caused by a change is queued in the change's own transaction: it is queued exactly when the
 * change commits, so a crash between the commit and the queueing can no longer lose it, and a
 * change that rolls back sends nothing.
 */

let t: TestApp;
beforeAll(async () => {
  // A queue, but no mail worker: the jobs stay in the queue where the test can count them.
  t = await startTestApp({}, { jobs: true });
});
afterAll(() => t.close());

const mail = (subject: string): OutgoingMail => ({ to: 'reader@example.invalid', subject, text: 'Invented test message.', html: '<p>Invented test message.</p>', kind: 'test' });

async function queued(subject: string): Promise<number> {
  const rows = await t.sequelize.query<{ n: string }>(`SELECT count(*) AS n FROM pgboss.job WHERE name = :name AND data->>'subject' = :subject`, {
    type: QueryTypes.SELECT,
    replacements: { name: t.queue!.names.mailSend, subject },
  });
  return Number(rows[0]!.n);
}

describe('mail queued with the change that caused it', () => {
  it('is not queued while the transaction is open, and is once it commits', async () => {
    const subject = `Committed (test) ${Date.now()}`;
    const transaction = await t.sequelize.transaction();
    expect(await enqueueMail(t.queue, [mail(subject)], undefined, { transaction })).toBe(1);
    expect(await queued(subject)).toBe(0); // other connections do not see it yet
    await transaction.commit();
    expect(await queued(subject)).toBe(1);
  });

  it('is gone with a transaction that rolls back', async () => {
    const subject = `Rolled back (test) ${Date.now()}`;
    const transaction = await t.sequelize.transaction();
    await enqueueMail(t.queue, [mail(subject)], undefined, { transaction });
    await transaction.rollback();
    expect(await queued(subject)).toBe(0);
  });
});
