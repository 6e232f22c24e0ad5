import nodemailer from 'nodemailer';
import type { Logger } from 'pino';
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
 * Pass the transaction's `db` executor to enqueue only if the surrounding change commits.
 */
export async function enqueueMail(queue: Queue | null, mails: OutgoingMail[], logger?: Logger): Promise<number> {
  if (!queue) {
    if (mails.length) logger?.warn({ count: mails.length }, 'no job queue in this process: mail not queued');
    return 0;
  }
  let sent = 0;
  for (const mail of mails) {
    if (await queue.boss.send(queue.names.mailSend, mail)) sent += 1;
  }
  return sent;
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
