/**
 * Period map of a periodically driven one-degree-of-freedom system theta'' = f(t, theta, theta'), its monodromy
 * matrix from the variational equations, and Newton's method for its fixed points (the periodic motions).
 *
 * Method: the state (theta, rate) is integrated over one drive period T together with the 2x2 fundamental matrix
 * Phi of the variational equations Phi' = J(t) Phi, J = [[0, 1], [df/dtheta, df/drate]], Phi(t0) = I, with odex
 * (Gragg-Bulirsch-Stoer extrapolation; Hairer, Norsett & Wanner, Solving ODEs I, section II.9). Phi(t0 + T) is the
 * derivative of the period map, so Newton's step for P(x) = x is dx = -(Phi - I)^-1 (P(x) - x).
 */
import { Solver } from 'odex';
import type { Mat2 } from './monodromy';

/** A T-periodic second-order system with its Jacobian. */
export interface PeriodicSystem {
  /** Drive period T (s). */
  readonly period: number;
  /** Start of the period used for the section (s), e.g. strobe phase / omega. */
  readonly t0: number;
  /** theta'' at (t, theta, rate). */
  accel(t: number, theta: number, rate: number): number;
  /** Writes d theta''/d theta into out[0] and d theta''/d rate into out[1]. */
  jacobian(t: number, theta: number, rate: number, out: Float64Array): void;
}

/** One application of the period map. */
export interface PeriodMapResult {
  /** (theta, rate) one period later. */
  readonly state: readonly [number, number];
  /** Derivative of the period map: the monodromy matrix at this start. */
  readonly monodromy: Mat2;
  /** Mean angle over the period (rad). */
  readonly meanAngle: number;
  /** false when the integrator gave up (step limit). */
  readonly ok: boolean;
  /** Right-hand-side evaluations used. */
  readonly evaluations: number;
}

/** Tolerances of the period-map integration; tight because Newton and bisection difference its results. */
export const PERIOD_MAP_RTOL = 1e-11;
export const PERIOD_MAP_ATOL = 1e-12;

/** Integrates state, variational equations and the running mean angle over one period from (theta0, rate0). */
export function periodMap(sys: PeriodicSystem, theta0: number, rate0: number): PeriodMapResult {
  const solver = new Solver(7);
  solver.relativeTolerance = PERIOD_MAP_RTOL;
  solver.absoluteTolerance = PERIOD_MAP_ATOL;
  solver.maxSteps = 200_000;
  const jac = new Float64Array(2);
  let evaluations = 0;
  const deriv = (t: number, y: number[]): number[] => {
    evaluations++;
    const th = y[0];
    const w = y[1];
    sys.jacobian(t, th, w, jac);
    const j0 = jac[0];
    const j1 = jac[1];
    // Phi stored row-major in y[2..5]; Phi' = J Phi with J = [[0, 1], [j0, j1]].
    return [
      w,
      sys.accel(t, th, w),
      y[4],
      y[5],
      j0 * y[2] + j1 * y[4],
      j0 * y[3] + j1 * y[5],
      th,
    ];
  };
  const out = solver.solve(deriv, sys.t0, [theta0, rate0, 1, 0, 0, 1, 0], sys.t0 + sys.period);
  const y = out.y;
  return {
    state: [y[0], y[1]],
    monodromy: [y[2], y[3], y[4], y[5]],
    meanAngle: y[6] / sys.period,
    ok: out.outcome === 0,
    evaluations,
  };
}

/** A fixed point of the period map found by Newton's method. */
export interface FixedPoint {
  readonly theta: number;
  readonly rate: number;
  readonly monodromy: Mat2;
  readonly meanAngle: number;
  readonly iterations: number;
}

/**
 * Newton's method on P(x) - x = 0 from (theta, rate). Steps are limited to 0.5 rad / 0.5 omega-scaled rate so
 * a poor start cannot jump across the circle. Converged when the residual is below 1e-10 (rad, rad/s scaled by the
 * drive angular frequency) or the Newton step below 1e-11. Returns null when it does not converge in `maxIterations` or Phi - I is singular.
 */
export function findPeriodicMotion(
  sys: PeriodicSystem, theta: number, rate: number, maxIterations = 30,
): FixedPoint | null {
  const omega = 2 * Math.PI / sys.period;
  let th = theta;
  let w = rate;
  for (let k = 0; k < maxIterations; k++) {
    const r = periodMap(sys, th, w);
    if (!r.ok) return null;
    const g0 = r.state[0] - th;
    const g1 = r.state[1] - w;
    if (Math.abs(g0) < 1e-10 && Math.abs(g1) < 1e-10 * omega) {
      return { theta: th, rate: w, monodromy: r.monodromy, meanAngle: r.meanAngle, iterations: k };
    }
    const m = r.monodromy;
    const a = m[0] - 1, b = m[1], c = m[2], d = m[3] - 1;
    const det = a * d - b * c;
    if (!Number.isFinite(det) || Math.abs(det) < 1e-14) return null;
    let d0 = -(d * g0 - b * g1) / det;
    let d1 = -(-c * g0 + a * g1) / det;
    // A Newton step this small lands within rounding of the fixed point (quadratic convergence): accept it without
    // another period map; the monodromy changes by O(step) there.
    if (Math.abs(d0) < 1e-11 && Math.abs(d1) < 1e-11 * omega) {
      return { theta: th + d0, rate: w + d1, monodromy: r.monodromy, meanAngle: r.meanAngle, iterations: k + 1 };
    }
    const scale = Math.max(Math.abs(d0) / 0.5, Math.abs(d1) / (0.5 * omega), 1);
    d0 /= scale;
    d1 /= scale;
    th += d0;
    w += d1;
    if (!Number.isFinite(th) || !Number.isFinite(w) || Math.abs(w) > 100 * omega) return null;
  }
  return null;
}
