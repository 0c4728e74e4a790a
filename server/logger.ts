import pino, { type Logger } from 'pino';

export type { Logger };

/** JSON logs on stdout; secrets in headers and bodies are redacted. */
export function createLogger(level: string, destination?: pino.DestinationStream): Logger {
  const options = {
    level,
    base: { app: 'quiverpoint' },
    redact: ['req.headers.authorization', 'req.headers.cookie', 'password', 'passwordHash', 'token'],
  };
  return destination ? pino(options, destination) : pino(options);
}

export const REDACTED = '<redacted>';

/** Path segments that follow these hold a bearer secret: case links and invitations (API and client routes). */
const TOKEN_PATH = /^((?:\/api)?\/(?:links|invitations)\/)(?!accept(?:[/?]|$))[^/?]+/;
/** Query parameters that may carry a secret. */
const SECRET_PARAMS = new Set(['token', 'access_token', 'code', 'key', 'secret', 'password', 'signature']);

/**
 * The URL as it may appear in a log: a link or invitation token in the path and secret-bearing query values are
 * replaced by `<redacted>`, because anyone holding the token can open the link or accept the invitation.
 */
export function redactUrl(url: string): string {
  const queryAt = url.indexOf('?');
  const path = (queryAt < 0 ? url : url.slice(0, queryAt)).replace(TOKEN_PATH, `$1${REDACTED}`);
  if (queryAt < 0) return path;
  const query = url
    .slice(queryAt + 1)
    .split('&')
    .map((pair) => {
      const eq = pair.indexOf('=');
      const name = eq < 0 ? pair : pair.slice(0, eq);
      let decoded = name;
      try {
        decoded = decodeURIComponent(name);
      } catch {
        // a malformed escape stays as sent; it is compared as is
      }
      return eq >= 0 && SECRET_PARAMS.has(decoded.toLowerCase()) ? `${name}=${REDACTED}` : pair;
    })
    .join('&');
  return `${path}?${query}`;
}
