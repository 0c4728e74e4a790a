/**
 * Adapter from a case to the periodic system the Floquet code works on (period-map.ts), through the equation of
 * motion and its Jacobian in equations.ts.
 */
import type { CaseParams } from '../case/case-schema';
import { buildModel, jacobian, rhs } from './equations';
import type { PeriodicSystem } from './period-map';

/** The case with any drive ramp removed: Floquet analysis is of the steady drive at drive.frequency. */
export function steadyDrive(params: CaseParams): CaseParams {
  if (!params.drive.ramp) return params;
  const { ramp: _ramp, ...drive } = params.drive;
  return { ...params, drive };
}

/**
 * The case's equation of motion as a T-periodic system (T = 1 / drive.frequency), sections taken at the drive
 * phase run.strobePhase. Any ramp is dropped first.
 */
export function periodicSystem(params: CaseParams): PeriodicSystem {
  const model = buildModel(steadyDrive(params));
  const omega = model.drive.omega;
  return {
    period: model.drive.period,
    t0: params.run.strobePhase / omega,
    accel: (t, theta, rate) => rhs(model, t, theta, rate),
    jacobian: (t, theta, rate, out) => {
      const j = jacobian(model, t, theta, rate);
      out[0] = j[0];
      out[1] = j[1];
    },
  };
}
