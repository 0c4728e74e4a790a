import { lastValueFrom, toArray, type Observable } from 'rxjs';
import { afterAll, describe, expect, it } from 'vitest';
import { templateCase, type CaseParams } from '../case';
import { defaultChartGrid, stabilityChart, type Grid2 } from '../engine/chart';
import { sweep } from '../engine/sweep';
import { handleEngineRequest } from './handle-request';
import { createNodeEngineWorker } from './node-pool';
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

describe('WorkerPool over worker_threads', () => {
  let threads = 0;
  let terminated = 0;
  const pool = new WorkerPool(() => {
    threads++;
    const w = createNodeEngineWorker();
    const terminate = w.terminate;
    w.terminate = () => {
      terminated++;
      terminate();
    };
    return w;
  }, 2);
  afterAll(() => pool.dispose());

  it('gives the same chart as a single-thread run, with monotone progress ending at 1', async () => {
    const c = templateCase();
    const grid = defaultChartGrid(c, 40);
    const { value, progress, partials } = await collect(pool.chart(c, grid));
    const single = stabilityChart(c, grid);
    expect(Array.from(value.maxMultiplier)).toEqual(Array.from(single.maxMultiplier));
    // Partial row blocks cover every row once and carry the final numbers.
    const rebuilt = new Float64Array(value.maxMultiplier.length);
    let rows = 0;
    for (const p of partials) {
      rebuilt.set(p.values, p.rowFrom * grid.x.count);
      rows += p.rowTo - p.rowFrom;
    }
    expect(rows).toBe(grid.y.count);
    expect(Array.from(rebuilt)).toEqual(Array.from(value.maxMultiplier));
    expect(progress.length).toBeGreaterThan(2);
    for (let i = 1; i < progress.length; i++) expect(progress[i]).toBeGreaterThan(progress[i - 1]);
    expect(progress[progress.length - 1]).toBe(1);
  }, 60_000);

  it('stops work when unsubscribed: busy threads are terminated and nothing is emitted after', async () => {
    const c = shortCase();
    const grid: Grid2 = {
      x: { field: 'drive.frequency', from: 20, to: 60, count: 12 },
      y: { field: 'drive.amplitude', from: 0.005, to: 0.02, count: 12 },
    };
    const before = terminated;
    const seen: string[] = [];
    await new Promise<void>((resolve) => {
      const sub = pool.outcomeMap(c, grid).subscribe({
        next: (e) => {
          seen.push(e.type);
          if (e.type === 'progress') {
            sub.unsubscribe();
            resolve();
          }
        },
      });
    });
    const countAtCancel = seen.length;
    await new Promise((r) => setTimeout(r, 300));
    expect(seen.length).toBe(countAtCancel);
    expect(seen).not.toContain('result');
    expect(terminated).toBeGreaterThan(before);
    // The pool replaces the terminated threads and keeps working.
    const { value } = await collect(pool.margins(templateCase()));
    expect(value.uprightHolds).toBe(true);
    expect(threads).toBeGreaterThan(2);
  }, 60_000);

  it('reports an invalid case as an error naming the field', async () => {
    const bad = { ...templateCase(), body: { kind: 'point-mass' as const, length: -1, mass: 1 } };
    await expect(lastValueFrom(pool.margins(bad))).rejects.toThrow(/body\.length/);
  }, 60_000);
});

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
    const single = sweep(c, spec);
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
