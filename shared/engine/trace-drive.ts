import type { CaseParams, Drive } from '../case/case-schema';
import { buildModel, rhs, type RigModel } from './equations';
import { polynomialFit, upwardCrossings } from './fit';
import { driveLimits } from './floquet';
import { integrate } from './integrate';
import { EngineCancelledError, type MotionHooks } from './motion';
import { portable } from './portable-math';

const { atan2, cos, hypot, sin } = portable;

/** A measured driven trace: times (s), angle from the upright (rad) and pivot position along the drive line (m). */
export interface DrivenTrace {
  time: ArrayLike<number>;
  angle: ArrayLike<number>;
  pivot: ArrayLike<number>;
}

/**
 * The drive read from a pivot column: s(t) = mean + a1 cos(phi(t) + phase1) + a2 cos(2 phi(t) + phase2), with
 * phi(t) = 2 pi (f0 tau + rampRate tau^2 / 2), tau = t - t0 (the trace's first time).
 */
export interface TraceDriveEstimate {
  /** Hz at the trace's first time */
  frequency: number;
  /** Hz/s: linear change of the frequency (0 when it drifts less than 1 % over the trace) */
  rampRate: number;
  /** m: first harmonic amplitude */
  amplitude: number;
  /** rad */
  phase: number;
  /** m: second harmonic amplitude (a crank's 2nd harmonic, about r^2 / 4l) */
  secondAmplitude: number;
  /** rad */
  secondPhase: number;
  /** m */
  mean: number;
  /** m: RMS of pivot minus the estimate */
  rmsResidual: number;
  /** s */
  t0: number;
}

const TWO_PI = 2 * Math.PI;

function phaseAt(d: Pick<TraceDriveEstimate, 'frequency' | 'rampRate'>, tau: number): number {
  return TWO_PI * (d.frequency * tau + 0.5 * d.rampRate * tau * tau);
}

/** Hz: the estimated drive frequency at time t. */
export function driveFrequencyAt(d: TraceDriveEstimate, t: number): number {
  return d.frequency + d.rampRate * (t - d.t0);
}

/** Linear least squares of the two harmonics for a given phase law; returns the estimate and its residual. */
function harmonicFit(time: ArrayLike<number>, pivot: ArrayLike<number>, frequency: number, rampRate: number): TraceDriveEstimate {
  const n = time.length;
  const t0 = time[0];
  const p = 5;
  const normal = Array.from({ length: p }, () => new Array<number>(p).fill(0));
  const rhsv = new Array<number>(p).fill(0);
  const basis = (tau: number): number[] => {
    const phi = phaseAt({ frequency, rampRate }, tau);
    return [1, cos(phi), sin(phi), cos(2 * phi), sin(2 * phi)];
  };
  for (let i = 0; i < n; i++) {
    const b = basis(time[i] - t0);
    for (let r = 0; r < p; r++) {
      rhsv[r] += b[r] * pivot[i];
      for (let c = 0; c < p; c++) normal[r][c] += b[r] * b[c];
    }
  }
  const x = solve(normal, rhsv);
  let ssr = 0;
  for (let i = 0; i < n; i++) {
    const b = basis(time[i] - t0);
    const fit = b.reduce((s, v, k) => s + v * x[k], 0);
    ssr += (pivot[i] - fit) ** 2;
  }
  // A cos phi + B sin phi = a cos(phi + phase) with a = hypot(A, B), phase = atan2(-B, A)
  return {
    frequency, rampRate, t0,
    mean: x[0],
    amplitude: hypot(x[1], x[2]),
    phase: atan2(-x[2], x[1]),
    secondAmplitude: hypot(x[3], x[4]),
    secondPhase: atan2(-x[4], x[3]),
    rmsResidual: Math.sqrt(ssr / n),
  };
}

/** Gaussian elimination with partial pivoting for the small normal equations. */
function solve(a: number[][], b: number[]): number[] {
  const n = b.length;
  const m = a.map((row, i) => [...row, b[i]]);
  for (let c = 0; c < n; c++) {
    let best = c;
    for (let r = c + 1; r < n; r++) if (Math.abs(m[r][c]) > Math.abs(m[best][c])) best = r;
    [m[c], m[best]] = [m[best], m[c]];
    const pivot = m[c][c];
    if (pivot === 0) continue;
    for (let r = 0; r < n; r++) {
      if (r === c) continue;
      const f = m[r][c] / pivot;
      for (let k = c; k <= n; k++) m[r][k] -= f * m[c][k];
    }
  }
  return m.map((row, i) => (row[i] === 0 ? 0 : row[n] / row[i]));
}

/**
 * Estimates the drive from the pivot column.
 *
 * Method: the local frequency of each pivot cycle from upward crossings of the mean (with hysteresis against
 * noise); a straight line through them gives the start frequency and the ramp rate (kept only when the frequency
 * changes by more than 1 % over the trace). For that phase law the amplitudes and phases of the first two
 * harmonics are a linear least squares; the start frequency is then refined by golden-section search on the
 * residual within half a cycle over the trace, where the crossing estimate is already.
 */
export function estimateDrive(time: ArrayLike<number>, pivot: ArrayLike<number>): TraceDriveEstimate {
  const n = time.length;
  let mean = 0;
  for (let i = 0; i < n; i++) mean += pivot[i];
  mean /= n;
  let hi = -Infinity;
  let lo = Infinity;
  for (let i = 0; i < n; i++) { hi = Math.max(hi, pivot[i]); lo = Math.min(lo, pivot[i]); }
  const crossings = upwardCrossings(time, pivot, mean, 0.2 * (hi - lo) / 2);
  if (crossings.length < 3) throw new Error('the pivot column holds fewer than two drive cycles');
  const mid: number[] = [];
  const freq: number[] = [];
  for (let k = 0; k + 1 < crossings.length; k++) {
    mid.push((crossings[k] + crossings[k + 1]) / 2);
    freq.push(1 / (crossings[k + 1] - crossings[k]));
  }
  const mt = mid.reduce((s, x) => s + x, 0) / mid.length;
  const mf = freq.reduce((s, x) => s + x, 0) / freq.length;
  let num = 0;
  let den = 0;
  mid.forEach((t, k) => { num += (t - mt) * (freq[k] - mf); den += (t - mt) ** 2; });
  const duration = time[n - 1] - time[0];
  let rampRate = den > 0 ? num / den : 0;
  if (Math.abs(rampRate) * duration < 0.01 * mf) rampRate = 0;
  const f0 = mf - rampRate * (mt - time[0]);
  // golden-section search of the start frequency
  const width = 0.5 / duration;
  let a = f0 - width;
  let b = f0 + width;
  const ratio = (Math.sqrt(5) - 1) / 2;
  const cost = (f: number): number => harmonicFit(time, pivot, f, rampRate).rmsResidual;
  let c = b - ratio * (b - a);
  let d = a + ratio * (b - a);
  let fc = cost(c);
  let fd = cost(d);
  for (let i = 0; i < 40 && b - a > 1e-9 * f0; i++) {
    if (fc < fd) { b = d; d = c; fd = fc; c = b - ratio * (b - a); fc = cost(c); }
    else { a = c; c = d; fc = fd; d = a + ratio * (b - a); fd = cost(d); }
  }
  return harmonicFit(time, pivot, (a + b) / 2, rampRate);
}

/** The case's drive for the estimate at time t: a sine, or two harmonics when the second exceeds 1 % of the first. */
export function caseDriveAt(base: Drive, d: TraceDriveEstimate, t: number): Drive {
  const frequency = Math.max(driveFrequencyAt(d, t), 1e-6);
  const tau = t - d.t0;
  const phi = phaseAt(d, tau);
  // engine phase omega (t - t) starts at 0 at t: fold the trace's phase at t into the harmonic phases
  const wrap = (x: number): number => atan2(sin(x), cos(x));
  const rel = d.amplitude > 0 ? d.secondAmplitude / d.amplitude : 0;
  const steady = { direction: base.direction };
  if (rel <= 0.01) {
    return { ...steady, amplitude: d.amplitude, frequency, waveform: { kind: 'harmonics', terms: [{ order: 1, relAmplitude: 1, phase: wrap(phi + d.phase) }] } };
  }
  return {
    ...steady,
    amplitude: d.amplitude,
    frequency,
    waveform: {
      kind: 'harmonics',
      terms: [
        { order: 1, relAmplitude: 1, phase: wrap(phi + d.phase) },
        { order: 2, relAmplitude: rel, phase: wrap(2 * phi + d.secondPhase) },
      ],
    },
  };
}

/** s''(t) of the estimate, m/s^2. */
function pivotAcceleration(d: TraceDriveEstimate): (t: number) => number {
  const w1 = TWO_PI * d.rampRate;
  return (tau: number) => {
    const phi = phaseAt(d, tau);
    const w = TWO_PI * (d.frequency + d.rampRate * tau);
    const p1 = phi + d.phase;
    const p2 = 2 * phi + d.secondPhase;
    return -d.amplitude * (cos(p1) * w * w + sin(p1) * w1)
      - d.secondAmplitude * (4 * cos(p2) * w * w + 2 * sin(p2) * w1);
  };
}

export interface LossOfHold {
  /** s */
  time: number;
  /** Hz: drive frequency then */
  frequency: number;
}

export interface OverlayOptions extends MotionHooks {
  /** rad: the two curves part when they differ by more than this (default 5 degrees) */
  partAngle?: number;
  /** rad: hold is lost when the slow motion leaves its first value by more than this (default 30 degrees) */
  holdLimit?: number;
}

export interface OverlayResult {
  drive: TraceDriveEstimate;
  /** s, rad from the upright: the trace's times, measured and simulated angles */
  time: Float64Array;
  measured: Float64Array;
  simulated: Float64Array;
  /** slow motion: angle averaged over each drive cycle, stamped at its middle */
  slowTime: Float64Array;
  slowMeasured: Float64Array;
  slowSimulated: Float64Array;
  /** rad: RMS of measured minus simulated */
  rmsDifference: number;
  /** s: first time |measured - simulated| exceeds partAngle; null if never */
  partTime: number | null;
  partAngle: number;
  holdLimit: number;
  lossOfHold: {
    measured: LossOfHold | null;
    /** the nonlinear run of the case with the estimated drive */
    simulated: LossOfHold | null;
    /** Floquet limits of the upright in drive frequency at the measured amplitude (Hz) */
    floquetLower: number | null;
    floquetUpper: number | null;
    /** the Floquet limit nearest the measured loss frequency, and measured minus it in Hz and percent of it */
    floquetPredicted: number | null;
    differenceHz: number | null;
    differencePercent: number | null;
  };
}

/** Mean of `values` over each drive cycle (phase law of the estimate), stamped at the cycle's middle. */
function slowMotion(time: ArrayLike<number>, values: ArrayLike<number>, d: TraceDriveEstimate): { t: number[]; v: number[] } {
  const t: number[] = [];
  const v: number[] = [];
  let cycle = 0;
  let sum = 0;
  let count = 0;
  let start = time[0];
  for (let i = 0; i < time.length; i++) {
    const c = Math.floor(phaseAt(d, time[i] - d.t0) / TWO_PI);
    if (c !== cycle) {
      if (count > 0) { t.push((start + time[i - 1]) / 2); v.push(sum / count); }
      cycle = c;
      sum = 0;
      count = 0;
      start = time[i];
    }
    sum += values[i];
    count++;
  }
  return { t, v };
}

function lossIn(slow: { t: number[]; v: number[] }, limit: number, d: TraceDriveEstimate): LossOfHold | null {
  const first = slow.v[0];
  const k = slow.v.findIndex((x) => Math.abs(x - first) > limit);
  return k < 0 ? null : { time: slow.t[k], frequency: driveFrequencyAt(d, slow.t[k]) };
}

/** Simulated angle at the trace's times [0, count), from (angle0, rate0) at the first time; NaN past a failure. */
function simulateAt(model: RigModel, time: ArrayLike<number>, count: number, y0: readonly number[], rtol: number, maxStep: number): Float64Array {
  const out = new Float64Array(count).fill(Number.NaN);
  const t0 = time[0];
  out[0] = y0[0];
  let i = 1;
  integrate((tau, y) => [y[1], rhs(model, tau, y[0], y[1])], 0, y0, time[count - 1] - t0, { rtol, atol: rtol * 1e-2, dense: true, maxStep }, (_o, tau, y, dense) => {
    while (i < count && time[i] - t0 <= tau) {
      out[i] = dense ? dense(0, time[i] - t0) : y[0];
      i++;
    }
  });
  return out;
}

/**
 * The start state that best matches the first three drive cycles: a cubic through the first eighth of a cycle
 * gives the first guess, then Gauss-Newton on (angle, rate) against the simulation. The rate swings at the drive
 * frequency, so a derivative of noisy samples alone would miss it by far.
 */
function startState(model: RigModel, trace: DrivenTrace, d: TraceDriveEstimate): [number, number] {
  const n = trace.time.length;
  const t0 = trace.time[0];
  let to = 0;
  while (to < n && trace.time[to] - t0 < 1 / (8 * d.frequency)) to++;
  const guess = polynomialFit(trace.time, trace.angle, 0, Math.min(n, Math.max(6, to)), 3);
  let y: [number, number] = [guess[0], guess[1]];
  let count = 0;
  while (count < n && trace.time[count] - t0 < 3 / d.frequency) count++;
  if (count < 8) return y;
  const maxStep = 1 / (2 * d.frequency);
  const steps = [1e-6, 1e-4];
  for (let iteration = 0; iteration < 6; iteration++) {
    const base = simulateAt(model, trace.time, count, y, 1e-9, maxStep);
    const columns = steps.map((h, k) => {
      const moved: [number, number] = [y[0], y[1]];
      moved[k] += h;
      const s = simulateAt(model, trace.time, count, moved, 1e-9, maxStep);
      return s.map((x, i) => (x - base[i]) / h);
    });
    const jtj = [[0, 0], [0, 0]];
    const jtr = [0, 0];
    for (let i = 0; i < count; i++) {
      const r = trace.angle[i] - base[i];
      if (!Number.isFinite(r)) continue;
      for (let a = 0; a < 2; a++) {
        jtr[a] += columns[a][i] * r;
        for (let b = 0; b < 2; b++) jtj[a][b] += columns[a][i] * columns[b][i];
      }
    }
    const det = jtj[0][0] * jtj[1][1] - jtj[0][1] * jtj[1][0];
    if (!(Math.abs(det) > 0)) break;
    const dy0 = (jtj[1][1] * jtr[0] - jtj[0][1] * jtr[1]) / det;
    const dy1 = (jtj[0][0] * jtr[1] - jtj[1][0] * jtr[0]) / det;
    y = [y[0] + dy0, y[1] + dy1];
    if (Math.abs(dy0) < 1e-9 && Math.abs(dy1) < 1e-7) break;
  }
  return y;
}

/**
 * Measured against simulated motion of a driven trace, and where each loses hold.
 *
 * Method: the drive from the pivot column ({@link estimateDrive}); the start state fitted to the first three drive
 * cycles; the case's equation of motion with that drive (rhs of
 * equations.ts, its pivot acceleration replaced by the estimate's) integrated from the trace's first time and
 * sampled at the trace's times. The slow motion is the mean over each drive cycle. Hold is lost where the slow
 * motion first leaves its first value by more than holdLimit; the Floquet limits are those of the upright in drive
 * frequency for the estimated amplitude and waveform (floquet.ts driveLimits).
 */
export function overlayDrivenTrace(params: CaseParams, trace: DrivenTrace, options: OverlayOptions = {}): OverlayResult {
  const n = trace.time.length;
  const partAngle = options.partAngle ?? (5 * Math.PI) / 180;
  const holdLimit = options.holdLimit ?? Math.PI / 6;
  const drive = estimateDrive(trace.time, trace.pivot);
  options.onProgress?.(0.05);
  const base = buildModel(params);
  const acceleration = pivotAcceleration(drive);
  const model: RigModel = { ...base, drive: { ...base.drive, acceleration } };
  const t0 = trace.time[0];
  const [angle0, rate0] = startState(model, trace, drive);
  const simulated = new Float64Array(n).fill(Number.NaN);
  simulated[0] = angle0;
  let i = 1;
  const tEnd = trace.time[n - 1] - t0;
  const period = 1 / Math.max(driveFrequencyAt(drive, t0), driveFrequencyAt(drive, trace.time[n - 1]));
  const rtol = Math.min(params.run.rtol, 1e-8);
  integrate((tau, y) => [y[1], rhs(model, tau, y[0], y[1])], 0, [angle0, rate0], tEnd, {
    rtol, atol: Math.min(params.run.atol, 1e-10), dense: true, maxStep: period / 2,
    shouldCancel: options.shouldCancel, cancelCheckEvery: 64,
  }, (_tOld, tau, y, dense) => {
    while (i < n && trace.time[i] - t0 <= tau) {
      simulated[i] = dense ? dense(0, trace.time[i] - t0) : y[0];
      i++;
    }
    options.onProgress?.(0.05 + 0.6 * (tau / tEnd));
  });
  if (options.shouldCancel?.()) throw new EngineCancelledError();
  const measured = Float64Array.from(trace.angle);
  let ssr = 0;
  let counted = 0;
  let partTime: number | null = null;
  for (let k = 0; k < n; k++) {
    if (!Number.isFinite(simulated[k])) continue;
    const diff = measured[k] - simulated[k];
    ssr += diff * diff;
    counted++;
    if (partTime === null && Math.abs(diff) > partAngle) partTime = trace.time[k];
  }
  const slowM = slowMotion(trace.time, measured, drive);
  const slowS = slowMotion(trace.time, simulated, drive);
  const measuredLoss = lossIn(slowM, holdLimit, drive);
  const simulatedLoss = lossIn(slowS, holdLimit, drive);

  // Floquet limits at the drive the rig had when it lost hold (or at the start)
  const at = measuredLoss?.time ?? t0;
  const steady = { ...params, drive: caseDriveAt(params.drive, drive, at) };
  let floquetLower: number | null = null;
  let floquetUpper: number | null = null;
  try {
    const limits = driveLimits(steady, 'drive.frequency', 1e-4);
    floquetLower = limits.lower;
    floquetUpper = limits.upper;
  } catch {
    // a drive outside the schema's range has no limits to show
  }
  options.onProgress?.(0.95);
  let floquetPredicted: number | null = null;
  if (measuredLoss) {
    const candidates = [floquetLower, floquetUpper].filter((x): x is number => x !== null);
    if (candidates.length) {
      floquetPredicted = candidates.reduce((best, x) => (Math.abs(x - measuredLoss.frequency) < Math.abs(best - measuredLoss.frequency) ? x : best));
    }
  }
  const differenceHz = measuredLoss && floquetPredicted !== null ? measuredLoss.frequency - floquetPredicted : null;
  return {
    drive,
    time: Float64Array.from(trace.time),
    measured,
    simulated,
    slowTime: Float64Array.from(slowM.t),
    slowMeasured: Float64Array.from(slowM.v),
    slowSimulated: Float64Array.from(slowS.v),
    rmsDifference: counted > 0 ? Math.sqrt(ssr / counted) : Number.NaN,
    partTime,
    partAngle,
    holdLimit,
    lossOfHold: {
      measured: measuredLoss,
      simulated: simulatedLoss,
      floquetLower,
      floquetUpper,
      floquetPredicted,
      differenceHz,
      differencePercent: differenceHz !== null && floquetPredicted ? (100 * differenceHz) / floquetPredicted : null,
    },
  };
}
