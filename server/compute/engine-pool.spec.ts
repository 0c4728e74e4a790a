import { lastValueFrom, toArray, type Observable } from 'rxjs';
import { afterAll, describe, expect, it } from 'vitest';
import { templateCase, type CaseParams } from '../../shared/case';
import { createNodeEngineWorker } from '../../shared/compute/node-pool';
import { WorkerPool, type PoolEvent } from '../../shared/compute/worker-pool';
import { defaultChartGrid, stabilityChart, type Grid2 } from '../../shared/engine/chart';
import { engineThreadEntry } from './engine-pool';

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
    const w = createNodeEngineWorker(engineThreadEntry());
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
