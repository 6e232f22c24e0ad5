import { Writable } from 'node:stream';
import { pino } from 'pino';
import { afterEach, describe, expect, it } from 'vitest';
import { logProcessFailures } from '../../server/logger';

/* A failure nothing awaited reaches the log as one JSON line with its error, not a bare stack. */

describe('logProcessFailures', () => {
  const before = { rejection: process.listeners('unhandledRejection'), exception: process.listeners('uncaughtException') };
  afterEach(() => {
    for (const l of process.listeners('unhandledRejection')) if (!before.rejection.includes(l)) process.off('unhandledRejection', l);
    for (const l of process.listeners('uncaughtException')) if (!before.exception.includes(l)) process.off('uncaughtException', l);
  });

  it('logs an unawaited rejection with its error as JSON, once however often it is called', () => {
    const lines: string[] = [];
    const sink = new Writable({
      write(chunk, _enc, done) {
        lines.push(String(chunk));
        done();
      },
    });
    const logger = pino({ base: undefined }, sink);
    logProcessFailures(logger);
    logProcessFailures(logger);
    const added = process.listeners('unhandledRejection').filter((l) => !before.rejection.includes(l));
    expect(added).toHaveLength(1);
    added[0]!(new Error('the mail server went away'), Promise.resolve());
    expect(lines).toHaveLength(1);
    const line = JSON.parse(lines[0]!) as { level: number; msg: string; err: { message: string; stack: string } };
    // pino's level 50 is "error".
    expect(line).toMatchObject({ level: 50, msg: 'a promise failed and nothing awaited it', err: { message: 'the mail server went away' } });
    expect(line.err.stack).toContain('logger.test.ts');
  });
});
