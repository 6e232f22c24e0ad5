import PgBoss from 'pg-boss';
import type { Config } from '../config';

/** Names of every job queue, with the instance prefix applied. */
export function queueNames(config: Pick<Config, 'jobs'>) {
  const p = config.jobs.queuePrefix ? `${config.jobs.queuePrefix}-` : '';
  return { clipProcess: `${p}clip-process` };
}

/**
 * The PostgreSQL-backed job queue (pg-boss). Jobs survive restarts; an active job whose worker
 * died expires after `expireSeconds` and is retried up to `retryLimit` times.
 */
export async function startQueue(config: Config) {
  const boss = new PgBoss({ connectionString: config.databaseUrl, max: 4 });
  boss.on('error', (err) => console.error('[jobs] pg-boss error', err));
  await boss.start();
  const names = queueNames(config);
  for (const name of Object.values(names)) {
    // 'short': at most one waiting job per singletonKey, so re-queueing a clip is harmless.
    const options = {
      name,
      policy: 'short' as const,
      retryLimit: config.jobs.retryLimit,
      retryDelay: 2,
      retryBackoff: true,
      expireInSeconds: config.jobs.expireSeconds,
    };
    await boss.createQueue(name, options);
    await boss.updateQueue(name, options); // createQueue leaves an existing queue's settings alone
  }
  return { boss, names };
}

export type Queue = Awaited<ReturnType<typeof startQueue>>;
