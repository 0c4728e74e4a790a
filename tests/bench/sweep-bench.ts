// Sweep throughput on the worker pool (worker_threads): points per second with 1 and 2 workers and their ratio.
// Each point is a full nonlinear motion run (template case over 40 s = 1600 drive periods, a typical sweep point) plus
// the upright's Floquet multiplier. The pools are warmed first, so thread start-up (tsx transform) is not counted.
// Much shorter points (5 s) are dominated by per-message overhead and scale poorly; that is why points go in chunks.
//
// Then a sweep with thresholds end to end (points, then the threshold rounds): seconds on 1 and 2 workers and the
// speed-up, target >= 1.8. The two pools take turns, so a busy spell of the shared machine hits both alike.
import { lastValueFrom, tap } from 'rxjs';
import { templateCase, type CaseParams } from '../../shared/case';
import { createEnginePool } from '../../server/compute/engine-pool';
import type { WorkerPool } from '../../shared/compute/worker-pool';
import type { SweepResult, SweepSpec } from '../../shared/engine/sweep';

export interface SweepBenchFigures {
  points: number;
  oneWorkerPointsPerSecond: number;
  twoWorkersPointsPerSecond: number;
  speedup: number;
  /** Sweep with thresholds, end to end: best seconds on 1 and 2 workers and their ratio. */
  thresholdSweep: { points: number; thresholds: number; oneWorkerSeconds: number; twoWorkersSeconds: number; speedup: number };
}

/** Target of the end-to-end speed-up of a sweep with thresholds on 2 workers. */
export const THRESHOLD_SWEEP_SPEEDUP_TARGET = 1.8;

function benchCase(): CaseParams {
  const c = templateCase();
  return { ...c, run: { ...c.run, duration: 40, outputPoints: 1000 } };
}

async function pointsPerSecond(workers: number, params: CaseParams, spec: SweepSpec): Promise<number> {
  const pool = createEnginePool(workers);
  try {
    await lastValueFrom(pool.sweep(params, { ...spec, steps: 2 * workers }));
    // Best of three: a shared 2-core machine has noisy neighbours, and the best run is the one they disturbed least.
    let best = Infinity;
    for (let i = 0; i < 3; i++) {
      const t0 = performance.now();
      const last = await lastValueFrom(pool.sweep(params, spec));
      best = Math.min(best, (performance.now() - t0) / 1000);
      if (last.type !== 'result' || last.value.points.length !== spec.steps) throw new Error('sweep did not complete');
    }
    return spec.steps / best;
  } finally {
    pool.dispose();
  }
}

interface TimedSweep {
  seconds: number;
  /** Seconds from the start until the points were done (progress reached the threshold stage). */
  pointSeconds: number;
  result: SweepResult;
}

async function timedSweep(pool: WorkerPool, params: CaseParams, spec: SweepSpec): Promise<TimedSweep> {
  const t0 = performance.now();
  let pointSeconds = NaN;
  const last = await lastValueFrom(pool.sweep(params, spec).pipe(tap((e) => {
    // 0.7 is where the sweep job's threshold stages begin (run-kinds.ts).
    if (e.type === 'progress' && e.fraction >= 0.7 - 1e-12 && Number.isNaN(pointSeconds)) pointSeconds = (performance.now() - t0) / 1000;
  })));
  if (last.type !== 'result' || last.value.points.length !== spec.steps) throw new Error('sweep did not complete');
  return { seconds: (performance.now() - t0) / 1000, pointSeconds, result: last.value };
}

async function thresholdSweep(params: CaseParams, repeats: number): Promise<SweepBenchFigures['thresholdSweep']> {
  // 20-80 Hz: the upright is lost below about 32 Hz, so one outcome and one multiplier threshold, each refined from
  // the point spacing (0.6 Hz) to the default tolerance (spacing / 64) in two rounds of seven runs.
  const spec: SweepSpec = { field: 'drive.frequency', from: 20, to: 80, steps: 100 };
  const pools = [createEnginePool(1), createEnginePool(2)];
  try {
    for (const pool of pools) await lastValueFrom(pool.sweep(params, { ...spec, steps: 2 * pool.size }));
    const best: Array<TimedSweep | null> = [null, null];
    for (let i = 0; i < repeats; i++) {
      for (const [k, pool] of pools.entries()) {
        const t = await timedSweep(pool, params, spec);
        const b = best[k];
        if (!b || t.seconds < b.seconds) best[k] = t;
      }
    }
    const [one, two] = best as [TimedSweep, TimedSweep];
    const thresholds = two.result.thresholds.length;
    if (thresholds === 0) throw new Error('the bench sweep found no thresholds');
    const probes = two.result.thresholds.reduce((n, t) => n + t.probes.length, 0);
    const speedup = one.seconds / two.seconds;
    console.log(`sweep with thresholds: ${spec.steps} points of 40 s motion, ${spec.field} ${spec.from}-${spec.to} Hz, `
      + `${thresholds} thresholds (${probes} bisection steps); best of ${repeats}, pools taking turns`);
    console.log(`  points / threshold rounds: 1 worker ${one.pointSeconds.toFixed(2)} / ${(one.seconds - one.pointSeconds).toFixed(2)} s, `
      + `2 workers ${two.pointSeconds.toFixed(2)} / ${(two.seconds - two.pointSeconds).toFixed(2)} s`);
    console.log(`sweep with thresholds, ${spec.steps} points, end to end: 1 worker ${one.seconds.toFixed(2)} s, `
      + `2 workers ${two.seconds.toFixed(2)} s, speed-up x${speedup.toFixed(2)} (target >= ${THRESHOLD_SWEEP_SPEEDUP_TARGET})`);
    return { points: spec.steps, thresholds, oneWorkerSeconds: one.seconds, twoWorkersSeconds: two.seconds, speedup };
  } finally {
    for (const pool of pools) pool.dispose();
  }
}

export async function run(): Promise<SweepBenchFigures> {
  const params = benchCase();
  // Every point holds the upright: no thresholds to bisect, so the figure is pure point throughput.
  const spec: SweepSpec = { field: 'drive.amplitude', from: 0.009, to: 0.03, steps: 48 };
  const one = await pointsPerSecond(1, params, spec);
  const two = await pointsPerSecond(2, params, spec);
  console.log(`sweep of ${spec.steps} motion runs (40 s, 1600 drive periods each; best of 3)`);
  console.log(`  1 worker : ${one.toFixed(2)} points/s`);
  console.log(`  2 workers: ${two.toFixed(2)} points/s  (x${(two / one).toFixed(2)})`);
  const withThresholds = await thresholdSweep(params, 5);
  return {
    points: spec.steps, oneWorkerPointsPerSecond: one, twoWorkersPointsPerSecond: two, speedup: two / one, thresholdSweep: withThresholds,
  };
}

// `npx tsx tests/bench/sweep-bench.ts` runs this bench alone.
if (require.main === module) void run();
