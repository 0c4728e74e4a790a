import type { ErrorRequestHandler, RequestHandler } from 'express';
import { ConnectionError, DatabaseError } from 'sequelize';
import type { ErrorCode } from '../../shared/api/errors';
import { AppError } from '../app-error';

/** Seconds a client should wait before retrying while the database is unreachable. */
export const DATABASE_RETRY_AFTER_SECONDS = 5;

/**
 * True when the error says the database cannot be reached or is going away (refused, timed out, pool exhausted,
 * server shutting down or restarting), as opposed to a query that failed: that is a 503 the client may retry.
 */
export function isDatabaseUnavailable(err: unknown): boolean {
  if (err instanceof ConnectionError) return true;
  if (!(err instanceof DatabaseError)) return false;
  const parent: { code?: unknown; message?: unknown } = err.parent;
  // SQLSTATE class 08 (connection exception); 57P01-57P03: admin shutdown, crash shutdown, cannot connect now.
  if (typeof parent.code === 'string') return parent.code.startsWith('08') || /^57P0[1-3]$/.test(parent.code);
  return typeof parent.message === 'string' && /Connection terminated|not queryable|ECONNRESET/.test(parent.message);
}

/** Unknown /api routes answer in JSON, like every other API error. */
export const apiNotFound: RequestHandler = (req, _res, next) => {
  next(new AppError('not_found', `No API route ${req.method} ${req.originalUrl.split('?')[0]}.`, 404));
};

interface HttpishError {
  status?: unknown;
  type?: unknown;
}

function httpish(err: unknown): HttpishError {
  return typeof err === 'object' && err !== null ? (err as HttpishError) : {};
}

/** Last middleware: every error leaves as `{ error: { code, message, field? } }`. */
export const jsonErrors: ErrorRequestHandler = (err: unknown, req, res, _next) => {
  let status = 500;
  let body: { code: ErrorCode; message: string; field?: string } = { code: 'internal_error', message: 'Something went wrong on the server.' };
  const { status: rawStatus, type } = httpish(err);
  if (isDatabaseUnavailable(err)) {
    status = 503;
    body = { code: 'database_unavailable', message: 'The database is not reachable; try again in a few seconds.' };
  } else if (err instanceof AppError) {
    status = err.status;
    body = { code: err.code, message: err.message, ...(err.field ? { field: err.field } : {}) };
  } else if (type === 'entity.parse.failed') {
    status = 400;
    body = { code: 'malformed_json', message: 'The request body is not valid JSON.' };
  } else if (type === 'entity.too.large') {
    status = 413;
    body = { code: 'payload_too_large', message: 'The request body is too large.' };
  } else if (rawStatus === 415) {
    status = 415;
    body = { code: 'unsupported_type', message: err instanceof Error ? err.message : 'Unsupported content type or encoding.' };
  } else if (typeof rawStatus === 'number' && rawStatus >= 400 && rawStatus < 500) {
    // One status per code: any other client error of the body parser is a plain 400.
    status = 400;
    body = { code: 'bad_request', message: err instanceof Error ? err.message : 'Bad request.' };
  }
  if (body.code === 'database_unavailable') res.setHeader('Retry-After', String(DATABASE_RETRY_AFTER_SECONDS));
  if (status >= 500) req.log?.error({ err }, 'request failed');
  res.status(status).json({ error: body });
};
