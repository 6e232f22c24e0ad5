import PgBoss from 'pg-boss';
import type { Logger } from 'pino';
import type { Config } from '../config';
import { createLogger } from '../logger';

/** Names of every job queue, with the instance prefix applied. */
export function queueNames(config: Pick<Config, 'jobs'>) {
  const p = config.jobs.queuePrefix ? `${config.jobs.queuePrefix}-` : '';
  return { clipProcess: `${p}clip-process`, mailSend: `${p}mail-send` };
}

/**
 * The PostgreSQL-backed job queue (pg-boss). Jobs survive restarts; an active job whose worker
 * died expires after `expireSeconds` and is retried up to `retryLimit` times.
 */
export async function startQueue(config: Config, logger: Logger = createLogger(config)) {
  const boss = new PgBoss({ connectionString: config.databaseUrl, max: 4 });
  // pg-boss's own errors (a lost connection, a failed maintenance run) go to the log as ours do.
  boss.on('error', (err) => logger.error({ err }, 'pg-boss error'));
  await boss.start();
  const names = queueNames(config);
  const queues = [
    // 'short': at most one waiting job per singletonKey, so re-queueing a clip is harmless.
    {
      name: names.clipProcess,
      policy: 'short' as const,
      retryLimit: config.jobs.retryLimit,
      retryDelay: 2,
      retryBackoff: true,
      expireInSeconds: config.jobs.expireSeconds,
    },
    // 'standard': every message is its own job. Growing delays ride out a mail server that is down for a while.
    {
      name: names.mailSend,
      policy: 'standard' as const,
      retryLimit: config.mail.retryLimit,
      retryDelay: config.mail.retryDelaySeconds,
      retryBackoff: true,
      expireInSeconds: 120,
    },
  ];
  for (const options of queues) {
    await boss.createQueue(options.name, options);
    await boss.updateQueue(options.name, options); // createQueue leaves an existing queue's settings alone
  }
  return { boss, names };
}

export type Queue = Awaited<ReturnType<typeof startQueue>>;
