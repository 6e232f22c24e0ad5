import { pino, type Logger } from 'pino';
import type { Config } from './config';

/** The server's logger: JSON lines on stdout, pretty enough to read, never the cookies. */
export function createLogger(config: Pick<Config, 'logLevel'>) {
  return pino({ level: config.logLevel, base: undefined, timestamp: pino.stdTimeFunctions.isoTime });
}

/**
 * Sends a promise nobody awaited that failed, and an exception nothing caught, to the log as one
 * JSON line each. A rejection is logged and the process goes on (Node's default would end it
 * with a bare stack); an uncaught exception is logged and the process ends with code 1, as Node
 * would, since its state can no longer be trusted. Once per process.
 */
export function logProcessFailures(logger: Logger) {
  if (watching) return;
  watching = true;
  process.on('unhandledRejection', (reason) => logger.error({ err: reason }, 'a promise failed and nothing awaited it'));
  process.on('uncaughtException', (err) => {
    logger.fatal({ err }, 'uncaught exception: stopping');
    process.exitCode = 1;
    setImmediate(() => process.exit(1));
  });
}
let watching = false;
