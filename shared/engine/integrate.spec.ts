import { describe, expect, it } from 'vitest';
import { integrate, rigDerivative } from './integrate';
import { buildModel, rhs } from './equations';
import { templateCase } from '../case/templates';

// y'' = -y, y(0) = 1: y = cos t (closed form)
const oscillator = (_t: number, y: number[]) => [y[1], -y[0]];

describe('integrate', () => {
  it('follows cos t within the requested tolerance and counts its right-hand-side calls', () => {
    for (const rtol of [1e-6, 1e-10]) {
      let calls = 0;
      const r = integrate((t, y) => { calls++; return oscillator(t, y); }, 0, [1, 0], 10, { rtol, atol: rtol });
      expect(r.status).toBe('completed');
      const err = Math.abs(r.y[0] - Math.cos(10));
      expect(err, `value ${r.y[0]}, reference ${Math.cos(10)}, difference ${err}, tolerance ${100 * rtol}`).toBeLessThan(100 * rtol);
      expect(r.rhsEvaluations).toBe(calls);
    }
  });

  it('gives a dense interpolant that matches the closed form inside steps', () => {
    let worst = 0;
    integrate(oscillator, 0, [1, 0], 10, { rtol: 1e-10, atol: 1e-10, dense: true }, (tOld, t, _y, dense) => {
      if (!dense) return;
      for (const f of [0.25, 0.5, 0.75]) {
        const tm = tOld + f * (t - tOld);
        worst = Math.max(worst, Math.abs(dense(0, tm) - Math.cos(tm)), Math.abs(dense(1, tm) + Math.sin(tm)));
      }
    });
    expect(worst).toBeLessThan(1e-8);
  });

  it('stops on cancellation, on an observer veto, at the step limit and on a blow-up, without throwing', () => {
    const cancelled = integrate(oscillator, 0, [1, 0], 1e4, { rtol: 1e-10, atol: 1e-10, shouldCancel: () => true, cancelCheckEvery: 1 });
    expect(cancelled.status).toBe('cancelled');
    expect(cancelled.t).toBeLessThan(1e4);
    const stopped = integrate(oscillator, 0, [1, 0], 10, { rtol: 1e-8, atol: 1e-8 }, (_a, t) => t < 1);
    expect(stopped.status).toBe('stopped');
    const limited = integrate(oscillator, 0, [1, 0], 1e4, { rtol: 1e-10, atol: 1e-10, maxSteps: 10 });
    expect(limited.status).toBe('step-limit');
    // y' = y^2 from 1 blows up at t = 1
    const blown = integrate((_t, y) => [y[0] * y[0]], 0, [1], 2, { rtol: 1e-8, atol: 1e-8, maxSteps: 1e5 });
    expect(blown.status).not.toBe('completed');
    expect(blown.y.every(Number.isFinite)).toBe(true);
  });
});

describe('rigDerivative', () => {
  it('agrees with rhs in every written-out branch', () => {
    const c = templateCase();
    const cases = [
      c,
      { ...c, drive: { ...c.drive, direction: 1.1 } },
      { ...c, damping: { ...c.damping, quadratic: 0.2, friction: 1 } },
    ];
    for (const p of cases) {
      const m = buildModel(p);
      const f = rigDerivative(m);
      for (const [t, th, r] of [[0.001, 0.3, -0.2], [0.0173, 2.9, 4]]) {
        const [d0, d1] = f(t, [th, r]);
        expect(Math.abs(d0 - r)).toBeLessThan(1e-15);
        expect(Math.abs(d1 - rhs(m, t, th, r))).toBeLessThan(1e-12 * Math.max(1, Math.abs(d1)));
      }
    }
  });
});
