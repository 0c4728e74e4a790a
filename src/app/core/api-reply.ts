import { type OperatorFunction, map } from 'rxjs';
import type { z } from 'zod';

/**
 * A server reply that does not match the API contract (shared/api). The page shows a plain sentence
 * (describeError); `details` names the first mismatches for the console and bug reports.
 */
export class ReplyMismatchError extends Error {
  constructor(
    readonly what: string,
    readonly details: string,
  ) {
    super(`The reply for ${what} does not match the API contract: ${details}`);
    this.name = 'ReplyMismatchError';
  }
}

/** Parses `reply` with `schema`, or throws ReplyMismatchError: never guesses or fills in defaults. */
export function parseReply<S extends z.ZodType>(schema: S, what: string, reply: unknown): z.output<S> {
  const result = schema.safeParse(reply);
  if (result.success) return result.data;
  const details = result.error.issues
    .slice(0, 3)
    .map((issue) => `${issue.path.length ? issue.path.join('.') : '(the reply)'}: ${issue.message}`)
    .join('; ');
  throw new ReplyMismatchError(what, details);
}

/** The RxJS form of parseReply, for HttpClient pipes. */
export function replyOf<S extends z.ZodType>(schema: S, what: string): OperatorFunction<unknown, z.output<S>> {
  return map((reply) => parseReply(schema, what, reply));
}
