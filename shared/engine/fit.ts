import { levenbergMarquardt } from 'ml-levenberg-marquardt';
import { integrate } from './integrate';
import { EngineCancelledError, type MotionHooks } from './motion';
import { portable } from './portable-math';

const { log, sin, tanh } = portable;

/** Damping terms the fit estimates besides the viscous ratio. */
export type FitModel = 'viscous' | 'viscous+quadratic' | 'viscous+friction';
export const FIT_MODELS: readonly FitModel[] = ['viscous', 'viscous+quadratic', 'viscous+friction'];

/** A measured free swing: strictly increasing times (s) and angles (rad) read from any fixed zero. */
export interface SwingTrace {
  time: ArrayLike<number>;
  angle: ArrayLike<number>;
}

export interface FitOptions extends MotionHooks {
  model: FitModel;
  /** m/s^2 (default standard gravity) */
  gravity?: number;
  /** rad/s: tanh smoothing of pivot friction, as in the case's damping (default 0.01) */
  frictionSmoothing?: number;
}

/** Fitted rig values in SI. */
export interface FitValues {
  /** m: equivalent length L = I / (m d) */
  equivalentLength: number;
  /** 1: damping ratio against omega0 = sqrt(g/L) */
  viscousRatio: number;
  /** 1/rad: coefficient of -c rate |rate| (model viscous+quadratic) */
  quadratic?: number;
  /** rad/s^2: friction torque over inertia (model viscous+friction) */
  friction?: number;
  /** rad: the sensor's reading when the body hangs at rest */
  offset: number;
  /** rad from the upright (pi hangs down) at the trace's first time */
  startAngle: number;
  /** rad/s at the trace's first time */
  startRate: number;
}

export interface FitResult {
  model: FitModel;
  fitted: FitValues;
  /** standard uncertainties, same keys */
  uncertainty: FitValues;
  /** Hz: small free swing frequency sqrt(g/L) / 2 pi */
  swingFrequency: number;
  swingFrequencyUncertainty: number;
  /** rad: root mean square of measured minus fitted */
  rmsResidual: number;
  points: number;
  iterations: number;
  /** s, rad (sensor reading): the trace's times, the fitted curve and the residual measured - fitted */
  time: Float64Array;
  fittedAngle: Float64Array;
  residual: Float64Array;
}

type Key = 'equivalentLength' | 'viscousRatio' | 'quadratic' | 'friction' | 'offset' | 'startAngle' | 'startRate';

const STANDARD_GRAVITY = 9.80665;

/**
 * Complete elliptic integral of the first kind K(k) with modulus k (parameter m = k^2), by the arithmetic-geometric
 * mean: K = pi / (2 AGM(1, sqrt(1 - k^2))). Converges quadratically; exact to rounding for |k| < 1.
 * Reference: Abramowitz & Stegun 17.6.
 */
export function ellipticK(k: number): number {
  let a = 1;
  let b = Math.sqrt(1 - k * k);
  for (let i = 0; i < 40 && Math.abs(a - b) > 1e-16 * a; i++) [a, b] = [(a + b) / 2, Math.sqrt(a * b)];
  return Math.PI / (2 * a);
}

/** Solves the symmetric positive definite system A x = b by Cholesky; null when A is not positive definite. */
function choleskyInverse(a: number[][]): number[][] | null {
  const n = a.length;
  const l = a.map(() => new Array<number>(n).fill(0));
  for (let i = 0; i < n; i++) {
    for (let j = 0; j <= i; j++) {
      let sum = a[i][j];
      for (let k = 0; k < j; k++) sum -= l[i][k] * l[j][k];
      if (i === j) {
        if (!(sum > 0)) return null;
        l[i][i] = Math.sqrt(sum);
      } else {
        l[i][j] = sum / l[j][j];
      }
    }
  }
  const inverse = a.map(() => new Array<number>(n).fill(0));
  for (let col = 0; col < n; col++) {
    const y = new Array<number>(n).fill(0);
    for (let i = 0; i < n; i++) {
      let sum = i === col ? 1 : 0;
      for (let k = 0; k < i; k++) sum -= l[i][k] * y[k];
      y[i] = sum / l[i][i];
    }
    for (let i = n - 1; i >= 0; i--) {
      let sum = y[i];
      for (let k = i + 1; k < n; k++) sum -= l[k][i] * inverse[k][col];
      inverse[i][col] = sum / l[i][i];
    }
  }
  return inverse;
}

/** Least-squares polynomial of degree `degree` in (t - t0) over the samples [from, to): its coefficients. */
export function polynomialFit(time: ArrayLike<number>, value: ArrayLike<number>, from: number, to: number, degree: number): number[] {
  const t0 = time[from];
  const p = degree + 1;
  const normal = Array.from({ length: p }, () => new Array<number>(p).fill(0));
  const rhs = new Array<number>(p).fill(0);
  for (let i = from; i < to; i++) {
    const x = time[i] - t0;
    const powers = [1];
    for (let k = 1; k < p; k++) powers.push(powers[k - 1] * x);
    for (let r = 0; r < p; r++) {
      rhs[r] += powers[r] * value[i];
      for (let c = 0; c < p; c++) normal[r][c] += powers[r] * powers[c];
    }
  }
  const inverse = choleskyInverse(normal);
  if (!inverse) return [value[from], 0];
  return inverse.map((row) => row.reduce((sum, v, c) => sum + v * rhs[c], 0));
}

/** Upward crossings of `level` with hysteresis `band`, linearly interpolated: times in s. */
export function upwardCrossings(time: ArrayLike<number>, value: ArrayLike<number>, level: number, band: number): number[] {
  const crossings: number[] = [];
  let armed = false;
  for (let i = 1; i < value.length; i++) {
    if (value[i] < level - band) armed = true;
    if (armed && value[i - 1] < level && value[i] >= level) {
      const a = value[i - 1] - level;
      const b = value[i] - level;
      crossings.push(time[i - 1] + ((time[i] - time[i - 1]) * a) / (a - b));
      armed = false;
    }
  }
  return crossings;
}

interface FirstGuess {
  omega0: number;
  zeta: number;
  offset: number;
  swing0: number;
  rate0: number;
  /** rad: typical swing amplitude */
  amplitude: number;
  /** s: mean swing period */
  period: number;
}

/**
 * Starting values from the trace's shape: the sensor zero from the mean over whole swings, the period from upward
 * crossings, omega0 from the period with the large-amplitude correction T = 4 K(sin(A/2)) / omega0, zeta from the
 * decay of the swing peaks (log decrement), the start state from a cubic through the first eighth of a swing.
 */
function firstGuess(trace: SwingTrace): FirstGuess {
  const { time, angle } = trace;
  const n = angle.length;
  let mean = 0;
  for (let i = 0; i < n; i++) mean += angle[i];
  mean /= n;
  let peak = 0;
  for (let i = 0; i < n; i++) peak = Math.max(peak, Math.abs(angle[i] - mean));
  let crossings = upwardCrossings(time, angle, mean, 0.05 * peak);
  if (crossings.length < 3) throw new Error('the trace holds fewer than two whole swings; a free-swing fit needs more');
  // mean over whole swings is the hanging reading to first order in the decay
  const wholeMean = (first: number, last: number): number => {
    let sum = 0;
    let count = 0;
    for (let i = 0; i < n; i++) if (time[i] >= first && time[i] < last) { sum += angle[i]; count++; }
    return count > 0 ? sum / count : mean;
  };
  const offset = wholeMean(crossings[0], crossings[crossings.length - 1]);
  crossings = upwardCrossings(time, angle, offset, 0.05 * peak);
  if (crossings.length < 3) throw new Error('the trace holds fewer than two whole swings; a free-swing fit needs more');
  const amplitudes: Array<{ t: number; a: number }> = [];
  let j = 0;
  for (let c = 0; c + 1 < crossings.length; c++) {
    let hi = -Infinity;
    let lo = Infinity;
    let at = crossings[c];
    while (j < n && time[j] < crossings[c]) j++;
    for (; j < n && time[j] < crossings[c + 1]; j++) {
      if (angle[j] > hi) { hi = angle[j]; at = time[j]; }
      lo = Math.min(lo, angle[j]);
    }
    amplitudes.push({ t: at, a: (hi - lo) / 2 });
  }
  const period = (crossings[crossings.length - 1] - crossings[0]) / (crossings.length - 1);
  const meanAmplitude = amplitudes.reduce((s, x) => s + x.a, 0) / amplitudes.length;
  const omega0 = (4 * ellipticK(sin(Math.min(meanAmplitude, 3) / 2))) / period;
  // slope of ln(amplitude) against time is -zeta omega0 for light damping
  let zeta = 1e-3;
  const usable = amplitudes.filter((x) => x.a > 0);
  if (usable.length >= 2) {
    const mt = usable.reduce((s, x) => s + x.t, 0) / usable.length;
    const ml = usable.reduce((s, x) => s + log(x.a), 0) / usable.length;
    let num = 0;
    let den = 0;
    for (const x of usable) { num += (x.t - mt) * (log(x.a) - ml); den += (x.t - mt) ** 2; }
    if (den > 0) zeta = Math.min(0.5, Math.max(1e-4, -num / den / omega0));
  }
  let to = 0;
  while (to < n && time[to] - time[0] < period / 8) to++;
  const [value, slope] = polynomialFit(time, angle, 0, Math.max(Math.min(n, 4), to), 3);
  return { omega0, zeta, offset, swing0: value - offset, rate0: slope, amplitude: meanAmplitude, period };
}

interface Layout {
  keys: Key[];
  scale: number[];
}

/**
 * The swing (angle from hanging, psi = theta - pi) at every trace time, for physical parameters in layout order.
 * psi'' = -omega0^2 sin psi - 2 zeta omega0 psi' - c psi'|psi'| - mu tanh(psi'/eps), the engine's equation of
 * motion with no drive, integrated with the engine's integrator and its dense output.
 */
function simulateSwing(
  time: ArrayLike<number>, values: Record<Key, number>, gravity: number, eps: number,
): Float64Array | null {
  const n = time.length;
  const out = new Float64Array(n);
  const L = values.equivalentLength;
  if (!(L > 0)) return null;
  const w2 = gravity / L;
  const damp = 2 * values.viscousRatio * Math.sqrt(w2);
  const c = values.quadratic;
  const mu = values.friction;
  const f = (_t: number, y: number[]): number[] => {
    const r = y[1];
    let acc = -w2 * sin(y[0]) - damp * r;
    if (c !== 0) acc -= c * r * Math.abs(r);
    if (mu !== 0) acc -= mu * tanh(r / eps);
    return [r, acc];
  };
  const t0 = time[0];
  out[0] = values.startAngle - Math.PI;
  let i = 1;
  const result = integrate(f, t0, [out[0], values.startRate], time[n - 1], {
    rtol: 1e-9, atol: 1e-11, dense: true, initialStep: 1e-3 / Math.sqrt(w2), maxSteps: 2e6,
  }, (_tOld, t, y, dense) => {
    while (i < n && time[i] <= t) {
      out[i] = dense ? dense(0, time[i]) : y[0];
      i++;
    }
  });
  if (result.status !== 'completed') return null;
  for (; i < n; i++) out[i] = result.y[0];
  return out;
}

function fullValues(keys: readonly Key[], p: readonly number[]): Record<Key, number> {
  const v: Record<Key, number> = { equivalentLength: 0, viscousRatio: 0, quadratic: 0, friction: 0, offset: 0, startAngle: 0, startRate: 0 };
  keys.forEach((k, i) => { v[k] = p[i]; });
  return v;
}

/**
 * Fits a free swing of the undriven body by nonlinear least squares on the full equation of motion.
 *
 * Method: the model reading is psi(t) + offset with psi from the engine's undriven equation
 * psi'' = -(g/L) sin psi - 2 zeta sqrt(g/L) psi' [- c psi'|psi'|] [- mu tanh(psi'/eps)] started at the estimated
 * start state; Levenberg-Marquardt (ml-levenberg-marquardt) on parameters scaled to order one, with a forward
 * difference step of 1e-6 of each parameter's scale. Starting values come from the trace's shape (period with the
 * elliptic-integral amplitude correction, log decrement, sensor zero from the mean over whole swings). The fit runs
 * first on about the first six swings, then on the whole trace, so a long trace cannot lock on a wrong period.
 * Standard uncertainties: sqrt of the diagonal of s^2 (J^T J)^-1, s^2 = SSR / (n - p), J by central differences at
 * the optimum (Bates & Watts, Nonlinear Regression Analysis and Its Applications, 1988, section 2.3).
 */
export function fitFreeSwing(trace: SwingTrace, options: FitOptions): FitResult {
  const n = trace.time.length;
  if (n !== trace.angle.length) throw new Error('time and angle differ in length');
  for (let i = 1; i < n; i++) if (!(trace.time[i] > trace.time[i - 1])) throw new Error('times must increase');
  const gravity = options.gravity ?? STANDARD_GRAVITY;
  const eps = options.frictionSmoothing ?? 0.01;
  const guess = firstGuess(trace);
  const L0 = gravity / (guess.omega0 * guess.omega0);
  const keys: Key[] = ['equivalentLength', 'viscousRatio'];
  const initial = [L0, guess.zeta];
  const scale = [L0, Math.max(guess.zeta, 1e-3)];
  if (options.model === 'viscous+quadratic') {
    keys.push('quadratic');
    initial.push(0);
    // c A omega ~ 2 zeta: the same damping as the viscous guess at the typical swing
    scale.push(Math.max((2 * guess.zeta) / Math.max(guess.amplitude, 1e-3), 1e-3));
  }
  if (options.model === 'viscous+friction') {
    keys.push('friction');
    initial.push(0);
    scale.push(Math.max(2 * guess.zeta * guess.omega0 * guess.omega0 * guess.amplitude, 1e-4));
  }
  keys.push('offset', 'startAngle', 'startRate');
  const amplitude = Math.max(guess.amplitude, 1e-3);
  initial.push(guess.offset, Math.PI + guess.swing0, guess.rate0);
  scale.push(amplitude, amplitude, amplitude * guess.omega0);
  const layout: Layout = { keys, scale };
  const p = keys.length;
  if (n <= p) throw new Error(`a fit of ${p} values needs more than ${p} points`);

  const lower = keys.map((k) => (k === 'viscousRatio' || k === 'quadratic' || k === 'friction' ? 0 : -Infinity));
  lower[0] = 0.05 * L0;
  let evaluations = 0;
  const expected = 60 * (p + 1);
  const physical = (u: readonly number[]): number[] => u.map((x, i) => x * layout.scale[i]);

  const angleAll = Float64Array.from(trace.angle);
  const timeAll = Float64Array.from(trace.time);
  const model = (time: ArrayLike<number>) => (u: number[]): ((x: number) => number) => {
    if (options.shouldCancel?.()) throw new EngineCancelledError();
    evaluations++;
    if (evaluations % 4 === 0) options.onProgress?.(Math.min(0.95, evaluations / expected));
    const v = fullValues(keys, physical(u));
    const psi = simulateSwing(time, v, gravity, eps);
    if (!psi) return () => Number.NaN;
    return (x: number) => psi[x] + v.offset;
  };

  let u = initial.map((x, i) => x / scale[i]);
  let iterations = 0;
  // stage one: the first six swings or so; stage two: everything
  let firstStage = 0;
  while (firstStage < n && timeAll[firstStage] - timeAll[0] < 6 * guess.period) firstStage++;
  const stages = firstStage < 0.8 * n ? [firstStage, n] : [n];
  for (const count of stages) {
    const time = timeAll.subarray(0, count);
    const data = { x: Array.from({ length: count }, (_, i) => i), y: angleAll.subarray(0, count) };
    let previous = Infinity;
    for (let round = 0; round < 20; round++) {
      const r = levenbergMarquardt(data, model(time), {
        initialValues: u,
        gradientDifference: 1e-4,
        centralDifference: true,
        damping: 1e-3,
        maxIterations: 5,
        errorTolerance: 1e-30,
        minValues: lower.map((x, i) => x / scale[i]),
        maxValues: keys.map(() => Number.MAX_SAFE_INTEGER),
      });
      iterations += r.iterations;
      u = r.parameterValues;
      const error = r.parameterError;
      if (!Number.isFinite(error)) throw new Error('the fit did not converge: the simulated swing failed');
      if (previous - error <= 1e-7 * error) break;
      previous = error;
    }
  }

  const best = physical(u);
  const values = fullValues(keys, best);
  const psi = simulateSwing(timeAll, values, gravity, eps);
  if (!psi) throw new Error('the fit did not converge: the simulated swing failed');
  const fittedAngle = psi.map((x) => x + values.offset);
  const residual = angleAll.map((y, i) => y - fittedAngle[i]);
  const ssr = residual.reduce((s, r) => s + r * r, 0);

  // Jacobian of the model reading by central differences, in scaled parameters
  const columns: Float64Array[] = [];
  for (let k = 0; k < p; k++) {
    const h = 1e-5;
    const up = u.slice();
    const down = u.slice();
    up[k] += h;
    down[k] -= h;
    const vu = fullValues(keys, physical(up));
    const vd = fullValues(keys, physical(down));
    const a = simulateSwing(timeAll, vu, gravity, eps);
    const b = simulateSwing(timeAll, vd, gravity, eps);
    if (!a || !b) throw new Error('the fit did not converge: the simulated swing failed');
    columns.push(a.map((x, i) => (x + vu.offset - b[i] - vd.offset) / (2 * h)));
  }
  const jtj = columns.map((ci) => columns.map((cj) => ci.reduce((s, x, i) => s + x * cj[i], 0)));
  const inverse = choleskyInverse(jtj);
  const s2 = ssr / (n - p);
  const sigma = keys.map((_, k) => (inverse ? Math.sqrt(Math.max(0, s2 * inverse[k][k])) * scale[k] : Number.NaN));

  const pick = (v: readonly number[]): FitValues => {
    const all = fullValues(keys, v);
    return {
      equivalentLength: all.equivalentLength,
      viscousRatio: all.viscousRatio,
      ...(keys.includes('quadratic') ? { quadratic: all.quadratic } : {}),
      ...(keys.includes('friction') ? { friction: all.friction } : {}),
      offset: all.offset,
      startAngle: all.startAngle,
      startRate: all.startRate,
    };
  };
  const L = values.equivalentLength;
  const swingFrequency = Math.sqrt(gravity / L) / (2 * Math.PI);
  options.onProgress?.(1);
  return {
    model: options.model,
    fitted: pick(best),
    uncertainty: pick(sigma),
    swingFrequency,
    // f ~ L^-1/2: relative uncertainty halves
    swingFrequencyUncertainty: (swingFrequency * sigma[0]) / (2 * L),
    rmsResidual: Math.sqrt(ssr / n),
    points: n,
    iterations,
    time: timeAll,
    fittedAngle,
    residual,
  };
}
