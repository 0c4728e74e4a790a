import type { ErrorRequestHandler, RequestHandler } from 'express';
import { AppError } from '../app-error';

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
  let body: { code: string; message: string; field?: string } = { code: 'internal_error', message: 'Something went wrong on the server.' };
  const { status: rawStatus, type } = httpish(err);
  if (err instanceof AppError) {
    status = err.status;
    body = { code: err.code, message: err.message, ...(err.field ? { field: err.field } : {}) };
  } else if (type === 'entity.parse.failed') {
    status = 400;
    body = { code: 'malformed_json', message: 'The request body is not valid JSON.' };
  } else if (type === 'entity.too.large') {
    status = 413;
    body = { code: 'payload_too_large', message: 'The request body is too large.' };
  } else if (typeof rawStatus === 'number' && rawStatus >= 400 && rawStatus < 500) {
    status = rawStatus;
    body = { code: 'bad_request', message: err instanceof Error ? err.message : 'Bad request.' };
  }
  if (status >= 500) req.log?.error({ err }, 'request failed');
  res.status(status).json({ error: body });
};
