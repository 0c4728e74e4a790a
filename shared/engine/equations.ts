import type { CaseParams } from '../case/case-schema';
import { bodyProperties, type BodyProperties } from './body';
import { driveKinematics, type DriveKinematics } from './drive';
import { portable } from './portable-math';

const { cos, cosh, sin, tanh } = portable;

/** Everything the equation of motion needs, precomputed from a validated case. */
export interface RigModel {
  /** m: equivalent length */
  L: number;
  /** m/s^2 */
  g: number;
  /** rad: drive line from the vertical */
  beta: number;
  sinBeta: number;
  cosBeta: number;
  /** rad/s: sqrt(g / L) */
  omega0: number;
  /** damping ratio against omega0 */
  zeta: number;
  /** 1/rad: coefficient of rate |rate| */
  quadratic: number;
  /** rad/s^2: friction torque / inertia */
  friction: number;
  /** rad/s: tanh smoothing scale */
  frictionSmoothing: number;
  body: BodyProperties;
  drive: DriveKinematics;
}

export function buildModel(params: CaseParams): RigModel {
  const g = params.gravity;
  const body = bodyProperties(params.body, g);
  const beta = params.drive.direction;
  return {
    L: body.equivalentLength,
    g,
    beta,
    sinBeta: sin(beta),
    cosBeta: cos(beta),
    omega0: body.naturalFrequency,
    zeta: params.damping.viscousRatio,
    quadratic: params.damping.quadratic,
    friction: params.damping.friction,
    frictionSmoothing: params.damping.frictionSmoothing,
    body,
    drive: driveKinematics(params.drive),
  };
}

/**
 * Angular acceleration theta'' of the body in the pivot's frame.
 *
 * Method: theta'' = (1/L) [ g sin(theta) + s''(t) sin(theta - beta) ] - 2 zeta omega0 theta'
 *                   - c theta' |theta'| - mu tanh(theta' / eps)
 * with theta from the upright (clockwise positive), s along the drive line at beta from the vertical (upward
 * positive for beta = 0), c the quadratic coefficient, mu the friction torque over I and eps the smoothing rate:
 * the tanh replaces the sign function of Coulomb friction so the right-hand side stays smooth for the integrator.
 */
export function rhs(model: RigModel, t: number, theta: number, rate: number): number {
  return rhsAt(model, model.drive.acceleration(t), sin(theta), cos(theta), rate);
}

/** `rhs` from the pivot acceleration s'' and sin/cos of theta, for callers that need those too (same bits). */
export function rhsAt(model: RigModel, sa: number, st: number, ct: number, rate: number): number {
  let acc = (model.g * st + sa * (st * model.cosBeta - ct * model.sinBeta)) / model.L - 2 * model.zeta * model.omega0 * rate;
  if (model.quadratic !== 0) acc -= model.quadratic * rate * Math.abs(rate);
  if (model.friction !== 0) acc -= model.friction * tanh(rate / model.frictionSmoothing);
  return acc;
}

/**
 * Partial derivatives of theta'' with respect to theta and theta' at (t, theta, rate): [d/dtheta, d/drate].
 * d/dtheta = (1/L) [ g cos(theta) + s'' cos(theta - beta) ];
 * d/drate = -2 zeta omega0 - 2 c |theta'| - (mu/eps) sech^2(theta'/eps).
 */
export function jacobian(model: RigModel, t: number, theta: number, rate: number): [number, number] {
  const sa = model.drive.acceleration(t);
  const st = sin(theta);
  const ct = cos(theta);
  const dTheta = (model.g * ct + sa * (ct * model.cosBeta + st * model.sinBeta)) / model.L;
  let dRate = -2 * model.zeta * model.omega0;
  if (model.quadratic !== 0) dRate -= 2 * model.quadratic * Math.abs(rate);
  if (model.friction !== 0) {
    const c = cosh(rate / model.frictionSmoothing);
    dRate -= model.friction / (model.frictionSmoothing * c * c);
  }
  return [dTheta, dRate];
}
