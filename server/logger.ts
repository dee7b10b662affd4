import pino, { type Logger } from 'pino';

export function createLogger(level: string): Logger {
  return pino({ level, base: { app: 'stillpoint' }, redact: ['req.headers.cookie', 'password', '*.password'] });
}
