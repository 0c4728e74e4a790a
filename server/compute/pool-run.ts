/**
 * A run computed on the server's engine threads: the pool's job for the run's kind, as a promise of the RunResult
 * that run-record.ts summarises and digests. Sweeps, charts and maps are split into the pool's fixed chunks, so the
 * numbers do not depend on the number of threads.
 */
import { filter, lastValueFrom, map, type Observable } from 'rxjs';
import type { CaseParams } from '../../shared/case/case-schema';
import type { PoolEvent, WorkerPool } from '../../shared/compute/worker-pool';
import type { RunResult, RunSettings } from '../../shared/engine/run-record';

function resultOf<T>(events: Observable<PoolEvent<T, unknown>>, wrap: (value: T) => RunResult): Promise<RunResult> {
  return lastValueFrom(
    events.pipe(
      filter((e): e is { type: 'result'; value: T } => e.type === 'result'),
      map((e) => wrap(e.value)),
    ),
  );
}

export function computeRunInPool(pool: WorkerPool, params: CaseParams, settings: RunSettings): Promise<RunResult> {
  switch (settings.kind) {
    case 'motion':
      return resultOf(pool.motion(params), (value) => ({ kind: 'motion', value }));
    case 'margins':
      return resultOf(pool.margins(params, settings.relTolerance), (value) => ({ kind: 'margins', value }));
    case 'sweep':
      return resultOf(pool.sweep(params, settings.spec), (value) => ({ kind: 'sweep', value }));
    case 'chart':
      return resultOf(pool.chart(params, settings.grid), (value) => ({ kind: 'chart', value }));
    case 'map':
      return resultOf(pool.outcomeMap(params, settings.grid), (value) => ({ kind: 'map', value }));
    case 'basin':
      return resultOf(pool.basin(params, settings.grid), (value) => ({ kind: 'basin', value }));
  }
}
