/**
 * The server's and the CLI's engine pool: worker threads running engine-thread next to this file (.ts under tsx
 * and Vitest, .js in the compiled server).
 */
import { availableParallelism } from 'node:os';
import { join } from 'node:path';
import { createNodeEnginePool } from '../../shared/compute/node-pool';
import type { WorkerPool } from '../../shared/compute/worker-pool';

/** Absolute path of the engine thread script. */
export function engineThreadEntry(): string {
  return join(__dirname, `engine-thread${__filename.endsWith('.ts') ? '.ts' : '.js'}`);
}

/** A pool of engine threads, one per core unless told otherwise (at least 1). */
export function createEnginePool(size: number = availableParallelism()): WorkerPool {
  return createNodeEnginePool(engineThreadEntry(), size);
}
