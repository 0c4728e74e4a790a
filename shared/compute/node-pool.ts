/**
 * Node side of the engine worker pool: a worker_threads adapter to `WorkerLike` and a pool factory for the server
 * and the CLI. The only Node-specific file in shared/ (browser and worker builds exclude it).
 *
 * Under tsx or Vitest (development, tests, CLI) the thread entry is TypeScript: the thread first registers tsx's
 * CommonJS loader (`tsx/cjs/api`; a `--import tsx` in the thread's execArgv does not reach worker threads on
 * Node 20), then requires the entry. The compiled server runs the `.js` entry next to this file's compiled output.
 */
import { createRequire } from 'node:module';
import { availableParallelism } from 'node:os';
import { join } from 'node:path';
import { Worker } from 'node:worker_threads';
import type { EngineRequest, EngineResponse } from './protocol';
import { isEngineResponse } from './protocol';
import { WorkerPool, type WorkerLike } from './worker-pool';

/** Path of the engine thread entry, .ts under tsx and .js when compiled. */
export function engineThreadEntry(): string {
  const ext = __filename.endsWith('.ts') ? '.ts' : '.js';
  return join(__dirname, '..', '..', 'server', 'compute', `engine-thread${ext}`);
}

/** A worker_threads Worker running the engine, seen as a `WorkerLike`. */
export function createNodeEngineWorker(entry: string = engineThreadEntry()): WorkerLike {
  let worker: Worker;
  if (entry.endsWith('.ts')) {
    const tsxApi = createRequire(__filename).resolve('tsx/cjs/api');
    const boot = `require(${JSON.stringify(tsxApi)}).register(); require(${JSON.stringify(entry)});`;
    worker = new Worker(boot, { eval: true });
  } else {
    worker = new Worker(entry);
  }
  const like: WorkerLike = {
    postMessage: (message: EngineRequest) => worker.postMessage(message),
    onmessage: null,
    onerror: null,
    terminate: () => {
      void worker.terminate();
    },
  };
  worker.on('message', (data: unknown) => {
    if (isEngineResponse(data)) like.onmessage?.({ data: data satisfies EngineResponse });
  });
  worker.on('error', (error: Error) => like.onerror?.({ message: error.message }));
  worker.on('exit', (code: number) => {
    if (code !== 0 && code !== 1) like.onerror?.({ message: `engine thread exited with code ${code}` });
  });
  return like;
}

/** A pool of engine threads, one per core unless told otherwise (at least 1). */
export function createNodeEnginePool(size: number = availableParallelism()): WorkerPool {
  return new WorkerPool(() => createNodeEngineWorker(), size);
}
