import { describe, it } from 'vitest';
import ellipk from '@stdlib/math-base-special-ellipk';
import ellipj from '@stdlib/math-base-special-ellipj';
import { integrate, rigDerivative } from '../../shared/engine/integrate';
import { buildModel } from '../../shared/engine/equations';
import { simulateMotion } from '../../shared/engine/motion';
import { templateCase } from '../../shared/case/templates';
import type { CaseParams } from '../../shared/case/case-schema';
import { expectNear, expectRelative } from './check';

// Source: Abramowitz & Stegun ch. 17 (complete elliptic integral K) and ch. 16 (Jacobi elliptic functions), as
// listed in docs/physics.md, computed by @stdlib/math-base-special-ellipk and -ellipj. A free pendulum swinging
// to amplitude theta0 from the downward vertical has period T = 4 sqrt(L/g) K(m), m = sin^2(theta0/2), and
// phi(t) = 2 arcsin(k sn(K - omega0 t | m)), k = sqrt(m), when released at rest from phi = theta0.

const g = 9.80665;
const L = 0.3;
const rtol = 1e-11;

function freeSwing(theta0: number): CaseParams {
  const c = templateCase();
  return {
    ...c,
    body: { kind: 'point-mass', length: L, mass: 1 },
    drive: { ...c.drive, amplitude: 0 },
    damping: { ...c.damping, viscousRatio: 0 },
    start: { angle: Math.PI - theta0, rate: 0 }, // engine angle from the upright; hanging is pi
    run: { ...c.run, duration: 12, rtol, atol: 1e-13, outputPoints: 24001 },
  };
}

describe('large-amplitude free swing vs elliptic functions (Abramowitz & Stegun ch. 16-17)', () => {
  for (const theta0 of [0.5, 2.0, 3.0]) {
    it(`has period 4 sqrt(L/g) K(sin^2(theta0/2)) at theta0 = ${theta0} rad (A&S ch. 17, @stdlib ellipk)`, () => {
      const m = Math.sin(theta0 / 2) ** 2;
      const periodRef = 4 * Math.sqrt(L / g) * ellipk(m);
      const r = simulateMotion(freeSwing(theta0));
      // crossings of hanging-down, where the angle is nearly linear in time, so linear interpolation is exact to O(h^3)
      const crossings: number[] = [];
      const { t, theta } = r.series;
      for (let i = 1; i < t.length; i++) {
        const a = theta[i - 1] - Math.PI;
        const b = theta[i] - Math.PI;
        if (a < 0 !== b < 0) crossings.push(t[i - 1] + ((t[i] - t[i - 1]) * a) / (a - b));
      }
      const period = (2 * (crossings[crossings.length - 1] - crossings[0])) / (crossings.length - 1);
      // the crossing times carry the global error of about ten swings, a few hundred times the per-step tolerance
      expectRelative(period, periodRef, 1e3 * rtol, `period vs 4 sqrt(L/g) K(m) at theta0 = ${theta0} (A&S ch. 17)`);
    });
  }

  it('follows phi(t) = 2 arcsin(k sn(K - omega0 t | m)) along the way (A&S ch. 16, @stdlib ellipj)', () => {
    const theta0 = 2.5;
    const m = Math.sin(theta0 / 2) ** 2;
    const k = Math.sqrt(m);
    const K = ellipk(m);
    const w0 = Math.sqrt(g / L);
    const c = freeSwing(theta0);
    let worst = 0;
    let worstAt = 0;
    integrate(rigDerivative(buildModel(c)), 0, [c.start.angle, 0], 8, { rtol, atol: 1e-13 }, (_tOld, t, y) => {
      const [sn] = ellipj(K - w0 * t, m);
      const phiRef = 2 * Math.asin(k * sn);
      // released at phi = -theta0 (start angle pi - theta0 from the upright), so phi = -2 arcsin(k sn(...))
      const err = Math.abs(y[0] - Math.PI + phiRef);
      if (err > worst) {
        worst = err;
        worstAt = t;
      }
    });
    // a global error a few hundred times the per-step tolerance after ~10 swings
    expectNear(worst, 0, 1e3 * rtol * theta0, `largest |phi - 2 arcsin(k sn)| (at t = ${worstAt.toFixed(3)} s) (A&S ch. 16)`);
  });
});
