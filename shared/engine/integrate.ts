import { Outcome, Solver } from 'odex';
import { rhs, type RigModel } from './equations';
import { portable } from './portable-math';

const { cos, sin } = portable;

/** y' = f(t, y); must return a new array (odex copies it). */
export type Derivative = (t: number, y: number[]) => number[];

/**
 * Solution inside the last accepted step: component index, time in [tOld, t]. `all(t, out)` writes every component
 * at t into out, the same numbers as one call per component in one pass (the odex patch's contexAll).
 */
export type DenseInterpolant = ((component: number, t: number) => number) & {
  readonly all: (t: number, out: Float64Array | number[]) => void;
};

/**
 * Called after every accepted step (not for the initial point). Return false to stop the integration early
 * (status 'stopped'). `y` is a fresh array the observer may keep.
 */
export type StepObserver = (tOld: number, t: number, y: number[], dense: DenseInterpolant | undefined) => boolean | void;

export interface IntegrateOptions {
  rtol: number;
  atol: number;
  /** Provide the dense interpolant to the observer (costs more right-hand-side calls per step). */
  dense?: boolean;
  /** Upper bound on steps; the run ends with status 'step-limit' beyond it. */
  maxSteps?: number;
  /** First trial step, s (default: 1/100 of the span). */
  initialStep?: number;
  /** Largest step, s (default: the whole span). */
  maxStep?: number;
  /** Polled every `cancelCheckEvery` accepted steps; true ends the run with status 'cancelled'. */
  shouldCancel?: () => boolean;
  cancelCheckEvery?: number;
}

export type IntegrateStatus = 'completed' | 'stopped' | 'cancelled' | 'step-limit' | 'non-finite';

export interface IntegrateResult {
  status: IntegrateStatus;
  /** Time reached (t1 when completed). */
  t: number;
  /** State at `t`. */
  y: number[];
  rhsEvaluations: number;
  acceptedSteps: number;
  rejectedSteps: number;
}

/** Settings found best for this engine's problems (fast periodic forcing at tight tolerances); see docs/physics.md. */
const PLAIN = { stepSizeSequence: 1, maxExtrapolationColumns: 8 } as const;
const DENSE = { stepSizeSequence: 4, maxExtrapolationColumns: 7 } as const;

/**
 * Integrates y' = f(t, y) from t0 to t1 with odex (Hairer & Wanner's GBS extrapolation code ODEX), counting
 * right-hand-side calls, with optional dense output, early stop and cancellation. Never throws for a failing
 * integration: the status says how it ended, and a non-finite state stops it ('non-finite').
 *
 * Method: explicit midpoint rule with Richardson extrapolation, order and step size chosen per step; error per step
 * below atol + rtol |y| (RMS over components). Step sequence 2, 4, 6, ... with up to 8 columns without dense
 * output; 2, 6, 10, ... with up to 7 columns and the dense interpolant without its (costly, step-rejecting) extra
 * error estimate when dense output is requested. Safety factors 0.94 and 0.98 (odex defaults 0.65 and 0.94) were
 * tuned on the benchmark case: fewer calls for the same final accuracy. Callers driving a periodic force should cap
 * maxStep at half a drive period: it avoids aliasing the forcing and, on the benchmark case, cuts calls by ~15%.
 * Reference: E. Hairer, S. P. Norsett, G. Wanner, Solving Ordinary Differential Equations I, 2nd ed., section II.9.
 */
export function integrate(
  f: Derivative,
  t0: number,
  y0: readonly number[],
  t1: number,
  options: IntegrateOptions,
  onStep?: StepObserver,
): IntegrateResult {
  const n = y0.length;
  const solver = new Solver(n);
  const dense = options.dense === true;
  const settings = dense ? DENSE : PLAIN;
  solver.stepSizeSequence = settings.stepSizeSequence;
  solver.maxExtrapolationColumns = settings.maxExtrapolationColumns;
  solver.denseOutput = dense;
  solver.denseOutputErrorEstimator = false;
  solver.stepSafetyFactor1 = 0.94;
  solver.stepSafetyFactor2 = 0.98;
  solver.relativeTolerance = options.rtol;
  solver.absoluteTolerance = options.atol;
  solver.maxSteps = Math.max(1, Math.floor(options.maxSteps ?? 1e7));
  solver.initialStepSize = options.initialStep ?? Math.abs(t1 - t0) / 100;
  if (options.maxStep !== undefined) solver.maxStepSize = options.maxStep;

  let evaluations = 0;
  const counted: Derivative = (t, y) => {
    evaluations++;
    return f(t, y);
  };

  let status: IntegrateStatus = 'completed';
  let tReached = t0;
  let yReached = y0.slice();
  let accepted = 0;
  const checkEvery = Math.max(1, options.cancelCheckEvery ?? 64);
  const observe = (_nr: number, tOld: number, t: number, y: number[], odexInterp?: (c: number, x: number) => number): boolean => {
    // the patched odex hangs `all` on its interpolant (patches/odex+2.0.4.patch); an install with an older patch
    // gets the same numbers one component at a time
    if (odexInterp && !('all' in odexInterp)) {
      (odexInterp as { all?: DenseInterpolant['all'] }).all = (x, out) => {
        for (let c = 0; c < n; c++) out[c] = odexInterp(c, x);
      };
    }
    const interp = odexInterp as DenseInterpolant | undefined;
    if (t === tOld && interp === undefined) return true; // odex reports the initial point too
    for (let i = 0; i < n; i++) {
      if (!Number.isFinite(y[i])) {
        status = 'non-finite';
        return false;
      }
    }
    accepted++;
    tReached = t;
    yReached = y;
    if (onStep && onStep(tOld, t, y, interp) === false) {
      status = 'stopped';
      return false;
    }
    if (options.shouldCancel && accepted % checkEvery === 0 && options.shouldCancel()) {
      status = 'cancelled';
      return false;
    }
    return true;
  };

  // odex throws only for settings it refuses (a programming error here); failing integrations end by status
  const result = solver.solve(counted, t0, y0.slice(), t1, observe);
  if (result.outcome === Outcome.MaxStepsExceeded) status = 'step-limit';
  if (status === 'completed') {
    tReached = t1;
    yReached = result.y;
  }
  return { status, t: tReached, y: yReached, rhsEvaluations: evaluations, acceptedSteps: accepted, rejectedSteps: result.nReject };
}

/**
 * The rig's first-order system y = [theta, rate] for `integrate`; the same function as `rhs`, with the common
 * cases (no quadratic damping or friction, vertical drive) written out because it runs a million times per run.
 */
export function rigDerivative(model: RigModel): Derivative {
  const { g, sinBeta, cosBeta, quadratic, friction } = model;
  const invL = 1 / model.L;
  const viscous = 2 * model.zeta * model.omega0;
  const pivotAcceleration = model.drive.acceleration;
  if (quadratic !== 0 || friction !== 0) return (t, y) => [y[1], rhs(model, t, y[0], y[1])];
  if (sinBeta === 0) {
    return (t, y) => [y[1], (g + pivotAcceleration(t) * cosBeta) * sin(y[0]) * invL - viscous * y[1]];
  }
  return (t, y) => {
    const st = sin(y[0]);
    const ct = cos(y[0]);
    return [y[1], (g * st + pivotAcceleration(t) * (st * cosBeta - ct * sinBeta)) * invL - viscous * y[1]];
  };
}
