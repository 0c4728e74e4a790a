import { describe, it } from 'vitest';
import ode45 from 'ode45-cash-karp';
import { buildModel, rhs } from '../../shared/engine/equations';
import { integrate, rigDerivative } from '../../shared/engine/integrate';
import { templateCase } from '../../shared/case/templates';
import type { CaseParams } from '../../shared/case/case-schema';
import { expectNear } from './check';

// Source: an independent integrator, the fifth-order Cash-Karp Runge-Kutta of the ode45-cash-karp package
// (docs/physics.md asks for two integrators agreeing), against odex on driven nonlinear cases.

const rtol = 1e-12;

function driven(): CaseParams[] {
  const c = templateCase();
  return [
    { ...c, drive: { ...c.drive, direction: 0.7, amplitude: 0.015, frequency: 25 }, damping: { ...c.damping, viscousRatio: 0.05 }, start: { angle: 0.8, rate: -1 } },
    {
      ...c,
      drive: { ...c.drive, amplitude: 0.02, frequency: 18, waveform: { kind: 'crank-slider', connectingRod: 0.06 } },
      damping: { viscousRatio: 0.02, quadratic: 0.05, friction: 0.5, frictionSmoothing: 0.2 },
      start: { angle: 2.5, rate: 3 },
    },
  ];
}

describe('odex agrees with an independent Cash-Karp integrator (ode45-cash-karp)', () => {
  for (const [i, params] of driven().entries()) {
    it(`on driven nonlinear case ${i + 1} after 2 s (ode45-cash-karp)`, () => {
      const model = buildModel(params);
      const tEnd = 2;
      const y = [params.start.angle, params.start.rate];
      const ck = ode45(y, (dydt, s, t) => {
        dydt[0] = s[1];
        dydt[1] = rhs(model, t, s[0], s[1]);
      }, 0, 1e-4, { tol: 1e-13, dtMaxMag: model.drive.period / 4, verbose: false });
      ck.steps(Number.POSITIVE_INFINITY, tEnd);
      const ours = integrate(rigDerivative(model), 0, [params.start.angle, params.start.rate], tEnd, { rtol, atol: 1e-13, maxStep: model.drive.period / 2 });
      // both hold about 1e-12 per step; over ~50 drive periods the global error grows to some hundred times that
      expectNear(ours.y[0], ck.y[0], 1e3 * rtol, `angle at ${tEnd} s, case ${i + 1}, odex vs Cash-Karp (ode45-cash-karp)`);
      expectNear(ours.y[1], ck.y[1], 1e4 * rtol, `rate at ${tEnd} s, case ${i + 1}, odex vs Cash-Karp (ode45-cash-karp)`);
    });
  }
});
