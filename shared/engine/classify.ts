import type { IntegrateStatus } from './integrate';

export type MotionOutcome = 'holds-upright' | 'settles-tilted' | 'falls' | 'tumbles' | 'irregular';

/** The numbers behind an outcome, all taken from the slow (period-averaged) motion after the transient. */
export interface OutcomeNumbers {
  /** s: start of the window classified */
  windowStart: number;
  /** count of slow samples in the window */
  samples: number;
  /** rad: largest |angle from the upright| (wrapped to [-pi, pi]) */
  maxDeviation: number;
  /** rad: mean angle from the upright, wrapped to (-pi, pi] */
  meanAngle: number;
  /** rad: max - min of the continuous (unwrapped) angle */
  slowRange: number;
  /** full turns between the lowest and highest continuous angle: floor(range / 2 pi) */
  netTurns: number;
  /** Hz: frequency of the slow oscillation about its mean, from mean-crossings; null with fewer than 3 crossings */
  slowFrequencyHz: number | null;
  /** why the verdict was reached, in words */
  reason: string;
}

/** Classification thresholds (rad); documented in docs/physics.md. */
export const OUTCOME_RULES = {
  /** slow motion stays within this of the upright: holds-upright */
  uprightBand: 0.5,
  /** slow motion's range below this: it has settled somewhere */
  settledRange: 0.35,
  /** mean within this of hanging straight down: falls */
  downBand: 0.35,
} as const;

function wrap(angle: number): number {
  const w = angle - 2 * Math.PI * Math.round(angle / (2 * Math.PI));
  return w <= -Math.PI ? w + 2 * Math.PI : w;
}

/** Hz from crossings of the mean, with linear interpolation of crossing times; null if fewer than 3 crossings. */
export function slowFrequency(t: Float64Array, theta: Float64Array, from: number, mean: number): number | null {
  let first = Number.NaN;
  let last = Number.NaN;
  let count = 0;
  for (let i = from + 1; i < t.length; i++) {
    const a = theta[i - 1] - mean;
    const b = theta[i] - mean;
    if ((a < 0 && b >= 0) || (a > 0 && b <= 0)) {
      const tc = t[i - 1] + ((t[i] - t[i - 1]) * a) / (a - b);
      if (count === 0) first = tc;
      last = tc;
      count++;
    }
  }
  if (count < 3 || !(last > first)) return null;
  return (count - 1) / (2 * (last - first));
}

/**
 * Classifies the slow (period-averaged) motion after the transient, in this order:
 * 1. the integration did not complete (non-finite state, step limit): irregular;
 * 2. the continuous angle spans more than a full turn: tumbles;
 * 3. every slow sample within `uprightBand` of the upright: holds-upright;
 * 4. slow range below `settledRange`: falls if its mean is within `downBand` of hanging down, else settles-tilted;
 * 5. the slow motion swings about hanging down (mid-range within `downBand` of it): falls;
 * 6. anything else: irregular.
 */
export function classifyMotion(
  slowT: Float64Array,
  slowTheta: Float64Array,
  windowStart: number,
  status: IntegrateStatus,
): { outcome: MotionOutcome; numbers: OutcomeNumbers } {
  let from = 0;
  while (from < slowT.length && slowT[from] < windowStart) from++;
  // keep at least a few samples for very short runs
  if (slowT.length - from < 4) from = Math.max(0, slowT.length - 4);
  let maxDev = 0;
  let min = Number.POSITIVE_INFINITY;
  let max = Number.NEGATIVE_INFINITY;
  let sum = 0;
  const n = slowT.length - from;
  for (let i = from; i < slowT.length; i++) {
    const th = slowTheta[i];
    maxDev = Math.max(maxDev, Math.abs(wrap(th)));
    if (th < min) min = th;
    if (th > max) max = th;
    sum += th;
  }
  const mean = n > 0 ? sum / n : Number.NaN;
  const range = n > 0 ? max - min : Number.NaN;
  const numbers: OutcomeNumbers = {
    windowStart: n > 0 ? slowT[from] : windowStart,
    samples: n,
    maxDeviation: maxDev,
    meanAngle: wrap(mean),
    slowRange: range,
    netTurns: Number.isFinite(range) ? Math.floor(range / (2 * Math.PI)) : 0,
    slowFrequencyHz: n > 0 ? slowFrequency(slowT, slowTheta, from, mean) : null,
    reason: '',
  };
  const rules = OUTCOME_RULES;
  const say = (outcome: MotionOutcome, reason: string) => ({ outcome, numbers: { ...numbers, reason } });
  if (status === 'non-finite' || status === 'step-limit' || n === 0) {
    return say('irregular', `integration ended early (${status}); no verdict on the motion`);
  }
  if (range > 2 * Math.PI) return say('tumbles', `the angle ran through ${(range / (2 * Math.PI)).toFixed(1)} turns after the transient`);
  if (maxDev < rules.uprightBand) {
    return say('holds-upright', `slow motion stayed within ${maxDev.toFixed(3)} rad of the upright (band ${rules.uprightBand} rad)`);
  }
  const distanceFromDown = Math.PI - Math.abs(wrap(mean));
  if (range < rules.settledRange) {
    if (distanceFromDown < rules.downBand) return say('falls', `settled ${distanceFromDown.toFixed(3)} rad from hanging down`);
    return say('settles-tilted', `settled at ${wrap(mean).toFixed(3)} rad from the upright (slow range ${range.toFixed(3)} rad)`);
  }
  const midFromDown = Math.PI - Math.abs(wrap((max + min) / 2));
  if (midFromDown < rules.downBand) return say('falls', `swings about hanging down (slow range ${range.toFixed(3)} rad)`);
  return say('irregular', `slow motion neither settled nor stayed upright (range ${range.toFixed(3)} rad, mean ${wrap(mean).toFixed(3)} rad)`);
}
