/**
 * Bench trace CSV parsed on one long-lived worker thread (bench-csv-thread.ts), so a large upload never blocks the
 * request thread. The thread starts on first use, does not keep the process alive, and is replaced if it dies.
 * Under tsx or Vitest its entry is TypeScript and the thread registers tsx's loader first, as node-pool.ts does.
 */
import { createRequire } from 'node:module';
import { join } from 'node:path';
import { Worker } from 'node:worker_threads';
import { ERROR_STATUS, type ErrorCode } from '../../shared/api/errors';
import { AppError } from '../app-error';
import type { AngleUnit, ParsedTrace } from './bench-csv';

export type ParseReply =
  | { id: number; ok: true; meta: Omit<ParsedTrace, 'series'>; seriesJson: string }
  | { id: number; ok: false; error: { code: ErrorCode; message: string; field: string | undefined } };

/** A parsed trace whose series is JSON text (for a jsonb column). */
export type ParsedTraceJson = Omit<ParsedTrace, 'series'> & { seriesJson: string };

interface Pending {
  resolve(value: ParsedTraceJson): void;
  reject(error: Error): void;
}

let worker: Worker | null = null;
let nextId = 1;
const pending = new Map<number, Pending>();

function failAll(error: Error): void {
  for (const p of pending.values()) p.reject(error);
  pending.clear();
  worker = null;
}

function startWorker(): Worker {
  const ext = __filename.endsWith('.ts') ? '.ts' : '.js';
  const entry = join(__dirname, `bench-csv-thread${ext}`);
  let w: Worker;
  if (ext === '.ts') {
    const tsxApi = createRequire(__filename).resolve('tsx/cjs/api');
    w = new Worker(`require(${JSON.stringify(tsxApi)}).register(); require(${JSON.stringify(entry)});`, { eval: true });
  } else {
    w = new Worker(entry);
  }
  w.unref();
  w.on('message', (reply: ParseReply) => {
    const p = pending.get(reply.id);
    if (!p) return;
    pending.delete(reply.id);
    if (reply.ok) p.resolve({ ...reply.meta, seriesJson: reply.seriesJson });
    else p.reject(new AppError(reply.error.code, reply.error.message, ERROR_STATUS[reply.error.code], reply.error.field));
  });
  w.on('error', (error: Error) => failAll(error));
  w.on('exit', () => failAll(new Error('the CSV parser thread stopped')));
  return w;
}

/** parseTraceCsv on the parser thread; rejects with the same AppError the parser throws. */
export function parseTraceCsvOffThread(text: string, unit: AngleUnit | undefined): Promise<ParsedTraceJson> {
  worker ??= startWorker();
  const id = nextId++;
  const w = worker;
  return new Promise<ParsedTraceJson>((resolve, reject) => {
    pending.set(id, { resolve, reject });
    w.postMessage({ id, text, unit });
  });
}
