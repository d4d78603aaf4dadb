import { pino, type Logger } from 'pino';

/** Structured JSON logging (pino); the level comes from LOG_LEVEL. */
export function createLogger(level: string): Logger {
  return pino({ level, base: { service: 'ligandry' }, redact: ['req.headers.authorization', 'password'] });
}
