/**
 * Response checking for tests (createApp `checkResponses`): wraps `res.json` so that a reply that does not parse
 * against its route's schema, or an error whose code is not in the code table with that status, fails the request
 * with 500 `response_contract` naming the mismatch. Never installed in production.
 */
import type { RequestHandler } from 'express';
import type { z } from 'zod';
import { ERROR_STATUS, errorBodySchema } from '../../shared/api/errors';
import { AppError } from '../app-error';

const REPLY = 'contractReply';

/** Per route: the schema its 2xx JSON replies must match (null: it answers without JSON). */
export function declareReply(reply: z.ZodType | null): RequestHandler {
  return (_req, res, next) => {
    res.locals[REPLY] = reply;
    next();
  };
}

function mismatch(status: number, body: unknown, reply: unknown): string | null {
  if (status >= 400) {
    const parsed = errorBodySchema.safeParse(body);
    if (!parsed.success) return `error body: ${summary(parsed.error)}`;
    const { code } = parsed.data.error;
    return ERROR_STATUS[code] === status ? null : `error ${code} is listed with status ${ERROR_STATUS[code]}, sent with ${status}`;
  }
  if (reply === undefined) return 'no reply schema is declared for this route';
  if (reply === null) return 'the route declares no JSON reply';
  const parsed = (reply as z.ZodType).safeParse(body);
  return parsed.success ? null : summary(parsed.error);
}

function summary(error: z.ZodError): string {
  return error.issues
    .slice(0, 5)
    .map((i) => `${i.path.length ? i.path.join('.') : '(root)'}: ${i.message}`)
    .join('; ');
}

/** On the API router, before every route. */
export const checkReplies: RequestHandler = (req, res, next) => {
  const send = res.json.bind(res);
  res.json = (body: unknown) => {
    const problem = mismatch(res.statusCode, body, res.locals[REPLY]);
    if (problem) {
      res.status(500);
      throw new AppError('response_contract', `${req.method} ${req.originalUrl.split('?')[0]} broke its contract: ${problem}`, 500);
    }
    return send(body);
  };
  next();
};
