import { Observable, filter, map } from 'rxjs';

import type { CaseParams } from '../../../../shared/case/case-schema';
import type { WorkerPool } from '../../../../shared/compute/worker-pool';
import { makeRunRecord, type RunRecord, type RunResult, type RunSettings } from '../../../../shared/engine/run-record';
import { isRunKind } from '../library/api-case-repository';
import { isRecord } from '../library/library-types';

/** Settings as stored with a run, when the engine knows their kind; null otherwise. */
export function runSettingsOf(kind: string, settings: unknown): RunSettings | null {
  if (!isRunKind(kind) || !isRecord(settings) || settings['kind'] !== kind) return null;
  return settings as unknown as RunSettings;
}

/** Progress, then the result; the pool's partial results (for live plots) are not needed here. */
export type RerunEvent<T> = { type: 'progress'; fraction: number } | { type: 'result'; value: T };

function tagged<T>(
  events: Observable<RerunEvent<T> | { type: 'partial'; value: unknown }>,
  wrap: (value: T) => RunResult,
): Observable<RerunEvent<RunResult>> {
  return events.pipe(
    filter((e): e is RerunEvent<T> => e.type === 'progress' || e.type === 'result'),
    map((e) => (e.type === 'progress' ? e : { type: 'result', value: wrap(e.value) })),
  );
}

/**
 * Recomputes a stored run in the browser's engine workers with its own settings, and emits progress then the new
 * run record (summary, digest, engine version), ready to compare with the stored one.
 */
export function rerunInPool(pool: WorkerPool, params: CaseParams, settings: RunSettings): Observable<RerunEvent<RunRecord>> {
  let results: Observable<RerunEvent<RunResult>>;
  switch (settings.kind) {
    case 'motion':
      results = tagged(pool.motion(params), (value) => ({ kind: 'motion', value }));
      break;
    case 'margins':
      results = tagged(pool.margins(params, settings.relTolerance), (value) => ({ kind: 'margins', value }));
      break;
    case 'sweep':
      results = tagged(pool.sweep(params, settings.spec), (value) => ({ kind: 'sweep', value }));
      break;
    case 'chart':
      results = tagged(pool.chart(params, settings.grid), (value) => ({ kind: 'chart', value }));
      break;
    case 'map':
      results = tagged(pool.outcomeMap(params, settings.grid), (value) => ({ kind: 'map', value }));
      break;
    case 'basin':
      results = tagged(pool.basin(params, settings.grid), (value) => ({ kind: 'basin', value }));
      break;
  }
  return results.pipe(
    map((e) => (e.type === 'progress' ? e : { type: 'result', value: makeRunRecord(params, settings, e.value) })),
  );
}
