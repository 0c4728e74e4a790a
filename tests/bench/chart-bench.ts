// Stability chart throughput: a 200 x 200 chart (frequency x amplitude, vertical sine drive) in one thread and on a
// warmed pool of 2 worker threads, in cells per second.
import { lastValueFrom } from 'rxjs';
import { templateCase } from '../../shared/case';
import { createEnginePool } from '../../server/compute/engine-pool';
import { defaultChartGrid, stabilityChart } from '../../shared/engine/chart';

export interface ChartBenchFigures {
  cells: number;
  stepsPerPeriod: number;
  singleThreadMs: number;
  singleThreadCellsPerSecond: number;
  twoWorkersMs: number;
  twoWorkersCellsPerSecond: number;
}

export async function run(): Promise<ChartBenchFigures> {
  const params = templateCase();
  const grid = defaultChartGrid(params, 200);
  const cells = grid.x.count * grid.y.count;
  stabilityChart(params, defaultChartGrid(params, 20));
  const t0 = performance.now();
  const single = stabilityChart(params, grid);
  const singleThreadMs = performance.now() - t0;
  const pool = createEnginePool(2);
  let twoWorkersMs: number;
  try {
    await lastValueFrom(pool.chart(params, defaultChartGrid(params, 40)));
    const t1 = performance.now();
    const last = await lastValueFrom(pool.chart(params, grid));
    twoWorkersMs = performance.now() - t1;
    if (last.type !== 'result') throw new Error('chart did not complete');
  } finally {
    pool.dispose();
  }
  const figures = {
    cells,
    stepsPerPeriod: single.stepsPerPeriod,
    singleThreadMs,
    singleThreadCellsPerSecond: cells / (singleThreadMs / 1000),
    twoWorkersMs,
    twoWorkersCellsPerSecond: cells / (twoWorkersMs / 1000),
  };
  console.log(`stability chart 200 x 200 (${cells} cells, ${single.stepsPerPeriod} + ${2 * single.stepsPerPeriod} Magnus steps per cell)`);
  console.log(`  1 thread : ${singleThreadMs.toFixed(0)} ms, ${figures.singleThreadCellsPerSecond.toFixed(0)} cells/s`);
  console.log(`  2 workers: ${twoWorkersMs.toFixed(0)} ms, ${figures.twoWorkersCellsPerSecond.toFixed(0)} cells/s`);
  return figures;
}
