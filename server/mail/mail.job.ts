import nodemailer from 'nodemailer';
import type { Logger } from 'pino';
import type { Transaction } from 'sequelize';
import type { Config } from '../config';
import type { Queue } from '../jobs/queue';

/** One message to send: always a plain-text and an HTML part. */
export interface OutgoingMail {
  to: string;
  subject: string;
  text: string;
  html: string;
  /** Extra headers (List-Unsubscribe, List-Unsubscribe-Post). */
  headers?: Record<string, string>;
  /** What kind of message, for the logs ("story-submitted", "story-published"…). */
  kind: string;
}

/**
 * Puts messages on the mail queue. Sending happens in the worker, so a slow or failing mail
 * server never fails the request that caused the mail; pg-boss retries with growing delays.
 * With `transaction`, the jobs are written on that transaction's connection (pg-boss's `db`
 * option; its tables live in the same database), so the mail is queued exactly when the change
 * that caused it commits: a crash between the two can no longer lose it.
 */
export async function enqueueMail(queue: Queue | null, mails: OutgoingMail[], logger?: Logger, opts: { transaction?: Transaction } = {}): Promise<number> {
  if (!queue) {
    if (mails.length) logger?.warn({ count: mails.length }, 'no job queue in this process: mail not queued');
    return 0;
  }
  const db = opts.transaction ? transactionDb(opts.transaction) : undefined;
  let sent = 0;
  for (const mail of mails) {
    if (await queue.boss.send(queue.names.mailSend, mail, db ? { db } : {})) sent += 1;
  }
  return sent;
}

/** pg-boss's executor over a Sequelize transaction's own pg connection. */
function transactionDb(transaction: Transaction) {
  // Sequelize 6 keeps the transaction's pg client on `connection` (not in its typings).
  const client = (transaction as unknown as { connection: { query(text: string, values: unknown[]): Promise<{ rows: unknown[] }> } }).connection;
  return { executeSql: (text: string, values: unknown[]) => client.query(text, values) };
}

/** The SMTP transport for the configured server (the local capture server unless SMTP_URL is set). */
export function createMailTransport(config: Pick<Config, 'mail'>) {
  // Short timeouts: a dead server fails the attempt quickly and the queue retries later.
  return nodemailer.createTransport({ url: config.mail.transportUrl, connectionTimeout: 5000, greetingTimeout: 5000, socketTimeout: 15000 } as never);
}

/** Sends queued mail. Returns a stop function. */
export async function startMailWorker(config: Config, queue: Queue, deps: { logger: Logger }) {
  const transport = createMailTransport(config);
  const workerId = await queue.boss.work<OutgoingMail>(queue.names.mailSend, { batchSize: 1, pollingIntervalSeconds: 1 }, async ([job]) => {
    if (!job) return;
    const mail = job.data;
    await transport.sendMail({ from: config.mail.from, to: mail.to, subject: mail.subject, text: mail.text, html: mail.html, headers: mail.headers });
    deps.logger.info({ kind: mail.kind, jobId: job.id }, 'mail sent');
  });
  return {
    async stop() {
      await queue.boss.offWork({ id: workerId });
      transport.close();
    },
  };
}
