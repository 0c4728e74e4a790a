import { describe, expect, it } from 'vitest';
import ellipk from '@stdlib/math-base-special-ellipk';
import { templateCase } from '../../shared/case/templates';
import type { CaseParams } from '../../shared/case/case-schema';
import { ellipticK, fitFreeSwing, upwardCrossings } from '../../shared/engine/fit';
import { syntheticTrace } from '../../shared/engine/synthetic-trace';
import { expectNear, expectRelative } from './check';

// Generated test data only: free swings of the engine's own equation with seeded Gaussian sensor noise and a
// sensor zero offset, fitted back by the Bench tab's least squares. Sources beside each check.

const DEG = Math.PI / 180;
const g = 9.80665;

function freeSwing(L: number, zeta: number, amplitude: number): CaseParams {
  const c = templateCase();
  return {
    ...c,
    body: { kind: 'point-mass', length: L, mass: 1 },
    drive: { ...c.drive, amplitude: 0 },
    damping: { ...c.damping, viscousRatio: zeta },
    start: { angle: Math.PI + amplitude, rate: 0 },
  };
}

describe('free-swing fit on generated traces', { timeout: 60_000 }, () => {
  it('recovers L within 0.2 % and zeta within 5 % from a 30 s, 500 Hz trace with 0.05 deg noise and a 1.5 deg zero offset', () => {
    const L = 0.42;
    const zeta = 0.006;
    const trace = syntheticTrace(freeSwing(L, zeta, 20 * DEG), {
      sampleRate: 500, duration: 30, noise: 0.05 * DEG, offset: 1.5 * DEG, fromHanging: true, seed: 20261202,
    });
    const r = fitFreeSwing(trace, { model: 'viscous' });
    expectRelative(r.fitted.equivalentLength, L, 2e-3, 'fitted L vs the L the trace was generated with');
    expectRelative(r.fitted.viscousRatio, zeta, 0.05, 'fitted zeta vs the zeta the trace was generated with');
    expectNear(r.fitted.offset, 1.5 * DEG, 0.01 * DEG, 'fitted sensor zero vs the offset added');
    // the residual is the added noise: its RMS is the noise's standard deviation
    expectRelative(r.rmsResidual, 0.05 * DEG, 0.05, 'RMS residual vs the noise standard deviation');
    // the stated uncertainty covers the true value (3 standard uncertainties)
    expectNear(r.fitted.equivalentLength, L, 3 * r.uncertainty.equivalentLength, 'L within 3 standard uncertainties');
    expectNear(r.fitted.viscousRatio, zeta, 3 * r.uncertainty.viscousRatio, 'zeta within 3 standard uncertainties');
  });

  it('agrees with the logarithmic decrement delta = 2 pi zeta / sqrt(1 - zeta^2) of the swing peaks (Thomson & Dahleh, Theory of Vibration with Applications, 5th ed., section 2.6)', () => {
    const zeta = 0.02;
    const trace = syntheticTrace(freeSwing(0.25, zeta, 4 * DEG), {
      sampleRate: 500, duration: 12, noise: 0.01 * DEG, offset: -1 * DEG, fromHanging: true, seed: 7,
    });
    const r = fitFreeSwing(trace, { model: 'viscous' });
    // peaks: the largest reading between successive upward crossings of the fitted zero, refined by a parabola
    const swing = trace.angle.map((a) => a - r.fitted.offset);
    const crossings = upwardCrossings(trace.time, swing, 0, 0.1 * DEG);
    const peaks: number[] = [];
    for (let c = 0; c + 1 < crossings.length; c++) {
      let best = -1;
      trace.time.forEach((t, i) => {
        if (t > crossings[c] && t < crossings[c + 1] && (best < 0 || swing[i] > swing[best])) best = i;
      });
      const [a, b, d] = [swing[best - 1], swing[best], swing[best + 1]];
      peaks.push(b - (0.125 * (a - d) ** 2) / (a - 2 * b + d));
    }
    // delta from the regression of ln(peak) on the swing count
    const k = peaks.map((_, i) => i);
    const mk = k.reduce((s, x) => s + x, 0) / k.length;
    const ml = peaks.reduce((s, p) => s + Math.log(p), 0) / peaks.length;
    const slope = k.reduce((s, x, i) => s + (x - mk) * (Math.log(peaks[i]) - ml), 0) / k.reduce((s, x) => s + (x - mk) ** 2, 0);
    const measuredDecrement = -slope;
    const fz = r.fitted.viscousRatio;
    expectRelative(2 * Math.PI * fz / Math.sqrt(1 - fz * fz), measuredDecrement, 0.02,
      'delta = 2 pi zeta / sqrt(1 - zeta^2) from the fitted zeta vs the peaks\' log decrement (Thomson & Dahleh 2.6)');
  });

  it('matches the large-amplitude period T = 4 K(sin(theta0/2)) / omega0 where the small-angle formula does not (Abramowitz & Stegun 17.3, @stdlib ellipk)', () => {
    const L = 0.3;
    const theta0 = 70 * DEG;
    const trace = syntheticTrace(freeSwing(L, 0.0002, theta0), {
      sampleRate: 500, duration: 16, noise: 0.05 * DEG, offset: 2 * DEG, fromHanging: true, seed: 3,
    });
    const r = fitFreeSwing(trace, { model: 'viscous' });
    const omega0 = Math.sqrt(g / r.fitted.equivalentLength);
    // first three swings, where the amplitude is still theta0 within 0.1 %
    const crossings = upwardCrossings(trace.time, trace.angle.map((a) => a - r.fitted.offset), 0, 1 * DEG).slice(0, 4);
    const measured = (crossings[3] - crossings[0]) / 3;
    const k = Math.sin(theta0 / 2);
    expectRelative(4 * ellipk(k * k) / omega0, measured, 1e-3, 'T = 4 K(m) / omega0 with the fitted L vs the trace\'s period (A&S 17.3)');
    expectRelative(r.fitted.equivalentLength, L, 2e-3, 'fitted L at 70 deg swing');
    // the small-angle formula L = g (T / 2 pi)^2 would be off by far more than the fit's tolerance
    const smallAngleL = g * (measured / (2 * Math.PI)) ** 2;
    expect(Math.abs(smallAngleL / L - 1), 'small-angle length error at 70 deg').toBeGreaterThan(0.05);
  });

  it('computes K(k) by the arithmetic-geometric mean as @stdlib ellipk does (Abramowitz & Stegun 17.6)', () => {
    for (const k of [0, 0.1, 0.5, 0.9, 0.999]) {
      expectRelative(ellipticK(k), ellipk(k * k), 1e-14, `K(${k}) vs @stdlib ellipk(m = k^2)`);
    }
  });
});
