import { DestroyRef, InjectionToken, inject } from '@angular/core';

import { WorkerPool, fromWebWorker, type WorkerLike } from '../../../../shared/compute/worker-pool';

/**
 * The engine worker pool of the browser. Injected only by lazy feature code, so neither the pool nor the engine
 * reaches the initial bundle. Tests provide a pool over fake workers instead.
 */
export const ENGINE_POOL = new InjectionToken<WorkerPool>('ENGINE_POOL', {
  providedIn: 'root',
  factory: () => {
    const pool = new WorkerPool(browserEngineWorker, enginePoolSize());
    inject(DestroyRef).onDestroy(() => pool.dispose());
    return pool;
  },
});

/** One engine Web Worker (a module worker, bundled by the Angular builder from workers/engine.worker.ts). */
export function browserEngineWorker(): WorkerLike {
  return fromWebWorker(new Worker(new URL('../../../../workers/engine.worker', import.meta.url), { type: 'module' }));
}

/** One worker per core, at least one and at most four (leaves the page's own thread some room). */
export function enginePoolSize(): number {
  const cores = typeof navigator !== 'undefined' ? navigator.hardwareConcurrency : 2;
  return Math.max(1, Math.min(4, Number.isFinite(cores) ? cores : 2));
}
