// Integrator and motion benchmark on the reference notes' benchmark case (vertical sine, L = 0.2 m, a = 10 mm,
// 40 Hz, zeta = 0.01, 200 s = 8000 drive periods, rtol 1e-10, atol 1e-12).
import { BENCHMARK_REFERENCE, benchmarkCase } from '../../shared/engine/benchmark-case';
import { buildModel } from '../../shared/engine/equations';
import { integrate, rigDerivative } from '../../shared/engine/integrate';
import { simulateMotion } from '../../shared/engine/motion';
import { setFlagsFromString } from 'node:v8';
import { runInNewContext } from 'node:vm';

// a callable collector, so retained memory can be told apart from garbage not yet collected
setFlagsFromString('--expose-gc');
const collect = runInNewContext('gc') as () => void;

export interface IntegratorFigures {
  label: string;
  wallMs: number;
  rhsEvaluations: number;
  rhsPerPeriod: number;
  finalAngle: number;
  finalRate: number;
}

const mb = (bytes: number) => `${(bytes / 2 ** 20).toFixed(1)} MB`;

function best<T extends { wallMs: number }>(repeats: number, once: () => T): T {
  let winner: T | undefined;
  for (let i = 0; i < repeats; i++) {
    const r = once();
    if (!winner || r.wallMs < winner.wallMs) winner = r;
  }
  return winner as T;
}

/** Bare odex integration of the benchmark case (no output), best of `repeats`. */
export function benchIntegrator(repeats = 3): IntegratorFigures {
  const params = benchmarkCase();
  const model = buildModel(params);
  const periods = params.run.duration * params.drive.frequency;
  return best(repeats, () => {
    const t0 = performance.now();
    const r = integrate(rigDerivative(model), 0, [params.start.angle, params.start.rate], params.run.duration, {
      rtol: params.run.rtol,
      atol: params.run.atol,
      maxStep: model.drive.period / 2,
      maxSteps: 1e7,
    });
    return {
      label: 'integrator only (odex, no dense output)',
      wallMs: performance.now() - t0,
      rhsEvaluations: r.rhsEvaluations,
      rhsPerPeriod: r.rhsEvaluations / periods,
      finalAngle: r.y[0],
      finalRate: r.y[1],
    };
  });
}

/** Full simulateMotion of the benchmark case (dense output, strobe, slow motion, outcome), best of `repeats`. */
export function benchMotion(repeats = 3): IntegratorFigures {
  const params = benchmarkCase();
  return best(repeats, () => {
    const t0 = performance.now();
    const r = simulateMotion(params);
    return {
      label: 'full motion run (dense output, strobe, slow motion)',
      wallMs: performance.now() - t0,
      rhsEvaluations: r.rhsEvaluations,
      rhsPerPeriod: r.summary.rhsPerDrivePeriod,
      finalAngle: r.summary.finalTheta,
      finalRate: r.summary.finalRate,
    };
  });
}

export interface MemoryFigures {
  duration: number;
  /** bytes: largest heap growth seen at the progress reports (includes uncollected garbage) */
  peakHeapGrowth: number;
  /** bytes: heap still held after the run and a full collection, with the result alive */
  retainedAfterRun: number;
  /** bytes: the result's typed arrays */
  resultBytes: number;
}

/** JS heap plus ArrayBuffer backing stores (typed arrays live outside the heap proper). */
function used(): number {
  const m = process.memoryUsage();
  return m.heapUsed + m.arrayBuffers;
}

/** Memory use of a motion run of `duration` seconds of the benchmark case. */
export function motionMemory(duration: number): MemoryFigures {
  const params = benchmarkCase(duration);
  collect();
  const base = used();
  let peak = 0;
  const r = simulateMotion(params, { onProgress: () => (peak = Math.max(peak, used() - base)) });
  collect();
  const retainedAfterRun = used() - base;
  const arrays = [r.series.t, r.series.theta, r.series.rate, r.series.energy, r.series.pivotForce, r.series.pivotPosition, r.strobe.t, r.strobe.theta, r.strobe.rate, r.slow.t, r.slow.theta, r.slow.rate];
  return { duration, peakHeapGrowth: peak, retainedAfterRun, resultBytes: arrays.reduce((s, a) => s + a.byteLength, 0) };
}

function printFigures(f: IntegratorFigures): void {
  const ref = BENCHMARK_REFERENCE;
  const angleDiff = Math.abs(Math.abs(f.finalAngle) - ref.finalAngle);
  const rateDiff = Math.abs(Math.abs(f.finalRate) - ref.finalRate);
  const verdict = f.rhsPerPeriod <= ref.dop853RhsPerPeriod ? 'at or below' : 'ABOVE';
  console.log(`${f.label}:`);
  console.log(`  wall time            ${f.wallMs.toFixed(0)} ms (best of 3)`);
  console.log(`  RHS evaluations      ${f.rhsEvaluations} = ${f.rhsPerPeriod.toFixed(1)} per drive period (${verdict} DOP853's ~${ref.dop853RhsPerPeriod})`);
  console.log(`  final angle          |${f.finalAngle.toExponential(6)}| vs ${ref.finalAngle.toExponential(5)} rad: difference ${angleDiff.toExponential(2)} (target < 1e-9)`);
  console.log(`  final rate           |${f.finalRate.toExponential(6)}| vs ${ref.finalRate.toExponential(5)} rad/s: difference ${rateDiff.toExponential(2)}`);
}

export function run(): void {
  // warm the JIT so timings describe steady code
  simulateMotion(benchmarkCase(20));
  const bare = benchIntegrator();
  const full = benchMotion();
  printFigures(bare);
  printFigures(full);
  // the cost of dense output, strobe, slow motion, force peak and outcome on top of the integration itself
  console.log(`full motion / bare integrator: ${(full.wallMs / bare.wallMs).toFixed(2)} (target <= 1.6; best of 3 each)`);
  const short = motionMemory(20);
  const long = motionMemory(200);
  console.log('memory (JS heap + array buffers) of motion runs, output budget 4000 points:');
  for (const m of [short, long]) {
    console.log(
      `  ${String(m.duration).padStart(4)} s run: peak growth ${mb(m.peakHeapGrowth)}, retained after GC ${mb(m.retainedAfterRun)}, result arrays ${mb(m.resultBytes)}`,
    );
  }
  const usage = process.memoryUsage();
  console.log(`  process now: rss ${mb(usage.rss)}, heap ${mb(usage.heapUsed)}; peak rss ${mb(process.resourceUsage().maxRSS * 1024)}`);
}
