/**
 * The JSON body parser and the one rule for user text. Every string in a body or query (values and object keys,
 * so titles, tags, notes, comments, names, labels and case parameters alike) must be storable by PostgreSQL text
 * and JSONB: no U+0000 and no unpaired UTF-16 surrogate. Bodies may nest at most MAX_JSON_DEPTH levels, checked
 * without recursion before anything recursive (validation, canonical JSON) sees them.
 */
import express, { type RequestHandler } from 'express';
import { AppError } from '../app-error';

export const MAX_JSON_DEPTH = 32;

const UNSTORABLE = /\u0000|[\uD800-\uDBFF](?![\uDC00-\uDFFF])|(?<![\uD800-\uDBFF])[\uDC00-\uDFFF]/;

function unstorable(field: string): AppError {
  return new AppError('invalid_text', `${field} contains a character that cannot be stored (a NUL character or a broken Unicode character).`, 422, field);
}

/**
 * Throws 400 `too_deep` when `value` nests deeper than `maxDepth`, and 422 `invalid_text` naming the first field
 * (dotted path) whose text, or whose key, PostgreSQL cannot store. Iterative, so any depth is safe to inspect.
 */
export function assertStorableText(value: unknown, options: { maxDepth?: number; what?: string } = {}): void {
  const maxDepth = options.maxDepth ?? MAX_JSON_DEPTH;
  const what = options.what ?? 'body';
  const stack: Array<{ value: unknown; path: string[] }> = [{ value, path: [] }];
  for (let item = stack.pop(); item; item = stack.pop()) {
    const { value: v, path } = item;
    if (typeof v === 'string') {
      if (UNSTORABLE.test(v)) throw unstorable(path.join('.') || what);
      continue;
    }
    if (typeof v !== 'object' || v === null) continue;
    if (path.length >= maxDepth) throw new AppError('too_deep', `The request ${what} nests deeper than ${maxDepth} levels.`, 400);
    const entries: Array<[string, unknown]> = Array.isArray(v) ? v.map((e, i) => [String(i), e]) : Object.entries(v);
    // Pushed in reverse so the first offending field in document order is the one reported.
    for (let i = entries.length - 1; i >= 0; i--) {
      const [key, child] = entries[i] as [string, unknown];
      if (UNSTORABLE.test(key)) throw unstorable([...path, key].join('.'));
      stack.push({ value: child, path: [...path, key] });
    }
  }
}

/** express.json plus the depth and text rule on the body and the query string. */
export function jsonBody(options: { limit: string }): RequestHandler[] {
  return [
    express.json({ limit: options.limit }),
    (req, _res, next) => {
      assertStorableText(req.query, { what: 'query' });
      if (req.body !== undefined) assertStorableText(req.body);
      next();
    },
  ];
}
