import { pino, type Logger } from 'pino';

export function createLogger(level: string): Logger {
  return pino({
    level,
    base: undefined,
    redact: { paths: ['req.headers.cookie', 'req.headers["x-csrf-token"]', 'password', '*.password', 'token'], remove: true },
  });
}
