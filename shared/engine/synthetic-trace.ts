import type { CaseParams } from '../case/case-schema';
import { buildModel, rhs } from './equations';
import { integrate } from './integrate';
import { portable } from './portable-math';

const { cos, log } = portable;

/**
 * Invented bench traces for tests, the benchmark and the demo data: the engine's own motion sampled on a uniform
 * clock, with seeded Gaussian sensor noise. They are never measurements and are labelled as generated wherever
 * they are stored.
 */

/** mulberry32: a small, fast 32-bit generator; the same seed gives the same numbers everywhere. */
export function seededRandom(seed: number): () => number {
  let a = seed >>> 0;
  return () => {
    a = (a + 0x6d2b79f5) >>> 0;
    let t = a;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
}

/** Standard normal deviates by the Box-Muller transform. */
export function seededNormal(seed: number): () => number {
  const uniform = seededRandom(seed);
  return () => Math.sqrt(-2 * log(1 - uniform())) * cos(2 * Math.PI * uniform());
}

export interface SyntheticTrace {
  /** s */
  time: number[];
  /** rad, as the sensor reads it */
  angle: number[];
  /** m, along the drive line (driven traces) */
  pivot?: number[];
}

export interface SyntheticOptions {
  /** Hz */
  sampleRate: number;
  /** s */
  duration: number;
  /** rad: standard deviation of the angle noise */
  noise: number;
  /** rad: added to every angle reading (the sensor's zero) */
  offset?: number;
  /** rad: reading = sensorOffset + (theta - pi) when true; theta from the upright otherwise */
  fromHanging?: boolean;
  seed: number;
  /** m: standard deviation of the pivot noise */
  pivotNoise?: number;
}

/**
 * Samples the case's motion (drive and damping as the case states them) at sampleRate from the case's start state.
 * Free swings: set the drive amplitude to 0 and `fromHanging` so the reading is the swing from hanging down.
 */
export function syntheticTrace(params: CaseParams, options: SyntheticOptions): SyntheticTrace {
  const model = buildModel(params);
  const n = Math.floor(options.duration * options.sampleRate) + 1;
  const normal = seededNormal(options.seed);
  const time = Array.from({ length: n }, (_, i) => i / options.sampleRate);
  const theta = new Array<number>(n).fill(params.start.angle);
  let i = 1;
  integrate((t, y) => [y[1], rhs(model, t, y[0], y[1])], 0, [params.start.angle, params.start.rate], time[n - 1], {
    rtol: 1e-11, atol: 1e-12, dense: true, maxStep: model.drive.periodic ? model.drive.period / 2 : undefined,
  }, (_tOld, t, y, dense) => {
    while (i < n && time[i] <= t) {
      theta[i] = dense ? dense(0, time[i]) : y[0];
      i++;
    }
  });
  const offset = options.offset ?? 0;
  const angle = theta.map((x) => (options.fromHanging ? x - Math.PI : x) + offset + options.noise * normal());
  if (params.drive.amplitude === 0) return { time, angle };
  const pivotNoise = options.pivotNoise ?? 0;
  return { time, angle, pivot: time.map((t) => model.drive.position(t) + pivotNoise * normal()) };
}

/** The trace as the Bench tab's CSV: header `time,angle_deg[,pivot]`, angles in degrees. */
export function traceCsv(trace: SyntheticTrace, comment?: string): string {
  const lines = comment ? [`# ${comment}`] : [];
  lines.push(trace.pivot ? 'time,angle_deg,pivot' : 'time,angle_deg');
  trace.time.forEach((t, i) => {
    const row = [t.toFixed(5), ((trace.angle[i] * 180) / Math.PI).toFixed(5)];
    if (trace.pivot) row.push(trace.pivot[i].toFixed(7));
    lines.push(row.join(','));
  });
  return `${lines.join('\n')}\n`;
}
