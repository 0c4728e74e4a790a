import type { z } from 'zod';
import { AppError } from '../app-error';

/** Parses `input` with `schema`; the first problem becomes a 400 naming the field. */
export function parseInput<S extends z.ZodType>(schema: S, input: unknown, what = 'body'): z.infer<S> {
  const result = schema.safeParse(input);
  if (result.success) return result.data;
  const issue = result.error.issues[0];
  const field = issue && issue.path.length > 0 ? issue.path.join('.') : undefined;
  if (!field && (input === undefined || input === null || typeof input !== 'object' || Array.isArray(input))) {
    throw new AppError('invalid_body', `The request ${what} must be a JSON object.`, 400);
  }
  const missing = issue !== undefined && field !== undefined && readPath(input, issue.path) === undefined;
  const message = missing ? `${field} is required.` : `${field ?? what}: ${issue?.message ?? 'invalid value'}`;
  throw new AppError(missing ? 'missing_field' : 'invalid_field', message, 400, field);
}

function readPath(input: unknown, path: readonly PropertyKey[]): unknown {
  let value: unknown = input;
  for (const key of path) {
    if (typeof value !== 'object' || value === null) return undefined;
    value = (value as Record<PropertyKey, unknown>)[key];
  }
  return value;
}
