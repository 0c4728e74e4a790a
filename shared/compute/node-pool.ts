/**
 * Node side of the engine worker pool: a worker_threads adapter to `WorkerLike` and a pool factory. The only
 * Node-specific file in shared/ (browser and worker builds exclude it). The thread script is the caller's: the
 * server and the CLI pass server/compute/engine-thread (see server/compute/engine-pool.ts).
 *
 * A TypeScript entry (under tsx or Vitest) first registers tsx's CommonJS loader in the thread (`tsx/cjs/api`; a
 * `--import tsx` in the thread's execArgv does not reach worker threads on Node 20), then requires the entry. A
 * `.js` entry (the compiled server) runs as it is.
 */
import { createRequire } from 'node:module';
import { availableParallelism } from 'node:os';
import { Worker } from 'node:worker_threads';
import type { EngineRequest, EngineResponse } from './protocol';
import { isEngineResponse } from './protocol';
import { WorkerPool, type WorkerLike } from './worker-pool';

/**
 * A worker_threads Worker running the engine, seen as a `WorkerLike`.
 * @param entry absolute path of the thread script (.ts or .js) that answers engine requests
 */
export function createNodeEngineWorker(entry: string): WorkerLike {
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

/** A pool of engine threads running `entry`, one per core unless told otherwise (at least 1). */
export function createNodeEnginePool(entry: string, size: number = availableParallelism()): WorkerPool {
  return new WorkerPool(() => createNodeEngineWorker(entry), size);
}
