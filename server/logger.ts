import { pino } from 'pino';
import type { Config } from './config';

/** The server's logger: JSON lines on stdout, pretty enough to read, never the cookies. */
export function createLogger(config: Pick<Config, 'logLevel'>) {
  return pino({ level: config.logLevel, base: undefined, timestamp: pino.stdTimeFunctions.isoTime });
}
