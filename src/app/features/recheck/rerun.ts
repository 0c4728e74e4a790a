import { Observable, map } from 'rxjs';

import type { CaseParams } from '../../../../shared/case/case-schema';
import type { WorkerPool } from '../../../../shared/compute/worker-pool';
import { makeRunRecord, type RunRecord } from '../../../../shared/engine/run-record';
import { parseRunSettings, type RunSettings } from '../../../../shared/engine/run-kinds';

/** Settings as stored with a run, when the engine's registry accepts them for that kind; null otherwise. */
export function runSettingsOf(kind: string, settings: unknown): RunSettings | null {
  const parsed = parseRunSettings(settings);
  return parsed.ok && parsed.value.kind === kind ? parsed.value : null;
}

/** Progress, then the result. */
export type RerunEvent<T> = { type: 'progress'; fraction: number } | { type: 'result'; value: T };

/**
 * Recomputes a stored run in the browser's engine workers with its own settings, and emits progress then the new
 * run record (summary, digest, engine version), ready to compare with the stored one.
 */
export function rerunInPool(pool: WorkerPool, params: CaseParams, settings: RunSettings): Observable<RerunEvent<RunRecord>> {
  return pool.run(params, settings).pipe(
    map((e) => (e.type === 'progress' ? e : { type: 'result', value: makeRunRecord(params, settings, e.value) })),
  );
}
