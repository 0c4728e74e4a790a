import { readFileSync, readdirSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { ERROR_CODES, ERROR_STATUS, type ErrorCode } from '../shared/api/errors';
import { AppError } from './app-error';

const SERVER = join(__dirname);
const TYPED_CODE_ARGUMENTS = ['code', 'reply.error.code'];

function sources(dir: string): Array<{ file: string; text: string }> {
  return readdirSync(dir, { withFileTypes: true, recursive: true })
    .filter((e) => e.isFile() && e.name.endsWith('.ts') && !e.name.endsWith('.spec.ts'))
    .map((e) => join(e.parentPath, e.name))
    .map((file) => ({ file, text: readFileSync(file, 'utf8') }));
}

/** The text of each `new AppError(` call's first argument. */
function firstArguments(text: string): string[] {
  const found: string[] = [];
  for (const match of text.matchAll(/new AppError\(/g)) {
    let depth = 0;
    let i = (match.index ?? 0) + match[0].length;
    const start = i;
    for (; i < text.length; i++) {
      const c = text[i];
      if (c === '(' || c === '[' || c === '{') depth++;
      else if (c === ')' || c === ']' || c === '}') depth--;
      else if (c === ',' && depth === 0) break;
    }
    found.push(text.slice(start, i).trim());
  }
  return found;
}

describe('error codes', () => {
  it('are snake_case, each with one 4xx or 5xx status', () => {
    for (const code of ERROR_CODES) {
      expect(code, code).toMatch(/^[a-z]+(_[a-z]+)*$/);
      expect(ERROR_STATUS[code], code).toBeGreaterThanOrEqual(400);
      expect(ERROR_STATUS[code], code).toBeLessThan(600);
    }
  });

  it('every AppError the server throws names a listed code', () => {
    const server = sources(SERVER);
    const unlisted: string[] = [];
    for (const { file, text } of server) {
      for (const arg of firstArguments(text)) {
        const literals = [...arg.matchAll(/'([^']*)'/g)].map((m) => m[1] ?? '');
        // Two sites pass a code typed ErrorCode (auth failures, errors relayed from the CSV thread); the rest name it literally.
        if (literals.length === 0 && !TYPED_CODE_ARGUMENTS.includes(arg)) unlisted.push(`${file}: ${arg}`);
        for (const code of literals) if (!Object.hasOwn(ERROR_STATUS, code)) unlisted.push(`${file}: ${code}`);
      }
    }
    expect(unlisted).toEqual([]);
  });

  it('lists no code that nothing answers with', () => {
    const text = sources(SERVER).map((s) => s.text).join('\n');
    const unused = ERROR_CODES.filter((code) => !text.includes(`'${code}'`));
    expect(unused).toEqual([]);
  });

  it('the server writes no error JSON by hand: only the error middleware sends error bodies', () => {
    const handWritten = sources(SERVER)
      .filter(({ file }) => !file.endsWith(join('middleware', 'errors.ts')))
      .filter(({ text }) => /\.json\(\s*\{\s*error/.test(text))
      .map(({ file }) => file);
    expect(handWritten).toEqual([]);
  });

  it('refuses a status other than the listed one at run time too', () => {
    const wrong = () => new AppError('invalid_field' as ErrorCode, 'x', 422 as never);
    expect(wrong).toThrow(/invalid_field must have status 400/);
    expect(new AppError('stale_revision', 'x', 409, 'baseRevision')).toMatchObject({ code: 'stale_revision', status: 409, field: 'baseRevision' });
  });
});
