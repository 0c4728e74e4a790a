import pino, { type Logger } from 'pino';

export type { Logger };

/** JSON logs on stdout; secrets in headers and bodies are redacted. */
export function createLogger(level: string): Logger {
  return pino({
    level,
    base: { app: 'quiverpoint' },
    redact: ['req.headers.authorization', 'req.headers.cookie', 'password', 'passwordHash', 'token'],
  });
}
