import { lastValueFrom, toArray, type Observable } from 'rxjs';
import { describe, expect, it } from 'vitest';
import { templateCase, type CaseParams } from '../case';
import { computeRun } from '../engine/run-kinds';
import { handleEngineRequest } from './handle-request';
import type { EngineResponse } from './protocol';
import { fromWebWorker, WorkerPool, type PoolEvent, type WebWorkerHandle, type WorkerLike } from './worker-pool';

/** The real handler run in this thread, answering asynchronously like a worker would. */
function inThreadWorker(): WorkerLike {
  let alive = true;
  const w: WorkerLike = {
    onmessage: null,
    onerror: null,
    postMessage: (message) => {
      setTimeout(() => {
        if (!alive) return;
        handleEngineRequest(message, (response: EngineResponse) => {
          if (alive) w.onmessage?.({ data: response });
        });
      }, 0);
    },
    terminate: () => {
      alive = false;
    },
  };
  return w;
}

function shortCase(): CaseParams {
  const c = templateCase();
  return { ...c, run: { ...c.run, duration: 2, outputPoints: 400 } };
}

async function collect<T, P>(job: Observable<PoolEvent<T, P>>): Promise<{ value: T; progress: number[]; partials: P[] }> {
  const all = await lastValueFrom(job.pipe(toArray()));
  const last = all[all.length - 1];
  if (last.type !== 'result') throw new Error('no result');
  const progress: number[] = [];
  const partials: P[] = [];
  for (const e of all) {
    if (e.type === 'progress') progress.push(e.fraction);
    else if (e.type === 'partial') partials.push(e.value);
  }
  return { value: last.value, progress, partials };
}

describe('WorkerPool determinism', () => {
  it('gives identical sweeps on 1 and 3 workers, equal to the single-thread sweep', async () => {
    const c = shortCase();
    const spec = { field: 'drive.frequency', from: 20, to: 50, steps: 5 };
    const results = [];
    for (const size of [1, 3]) {
      const pool = new WorkerPool(inThreadWorker, size);
      const { value, partials } = await collect(pool.sweep(c, spec));
      expect(partials.flat().map((p) => p.index).sort()).toEqual([0, 1, 2, 3, 4]);
      results.push(value);
      pool.dispose();
    }
    const run = computeRun(c, { kind: 'sweep', spec });
    if (run.kind !== 'sweep') throw new Error(`unexpected ${run.kind} run`);
    const single = run.value;
    for (const r of results) {
      expect(r.points).toEqual(single.points);
      expect(r.thresholds).toEqual(single.thresholds);
    }
    expect(single.thresholds.length).toBeGreaterThan(0);
  }, 120_000);
});

describe('fromWebWorker', () => {
  it('runs a pool job through a Web Worker-shaped object and ignores foreign messages', async () => {
    const made: WebWorkerHandle[] = [];
    const factory = (): WorkerLike => {
      const handle: WebWorkerHandle = {
        onmessage: null,
        onerror: null,
        terminate: () => undefined,
        postMessage: (message: unknown) => {
          setTimeout(() => {
            const deliver = handle.onmessage;
            if (typeof deliver !== 'function') return;
            deliver({ data: { hello: 'not an engine response' } });
            handleEngineRequest(message, (response) => deliver({ data: response }));
          }, 0);
        },
      };
      made.push(handle);
      return fromWebWorker(handle);
    };
    const pool = new WorkerPool(factory, 1);
    const { value } = await collect(pool.margins(templateCase()));
    expect(value.uprightHolds).toBe(true);
    expect(made).toHaveLength(1);
    pool.dispose();
  }, 60_000);
});
