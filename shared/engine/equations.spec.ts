import { describe, expect, it } from 'vitest';
import { buildModel, jacobian, rhs } from './equations';
import { templateCase } from '../case/templates';

describe('rhs and jacobian', () => {
  it('pulls the body over in the direction it leans, with the pivot at rest', () => {
    const c = templateCase();
    const m = buildModel({ ...c, drive: { ...c.drive, amplitude: 0 } });
    expect(rhs(m, 0, 0.1, 0)).toBeGreaterThan(0);
    expect(Math.abs(rhs(m, 0, 0.1, 0) - (9.80665 * Math.sin(0.1)) / 0.2)).toBeLessThan(1e-12);
  });

  it('has a Jacobian that matches finite differences with every damping term on', () => {
    const c = templateCase();
    const m = buildModel({
      ...c,
      drive: { ...c.drive, direction: 0.7, waveform: { kind: 'crank-slider', connectingRod: 0.04 } },
      damping: { viscousRatio: 0.05, quadratic: 0.3, friction: 2, frictionSmoothing: 0.1 },
    });
    for (const [t, th, r] of [[0.003, 0.4, 0.05], [0.011, -2.5, -1.3]]) {
      const [dth, dr] = jacobian(m, t, th, r);
      const h = 1e-6;
      const fdTh = (rhs(m, t, th + h, r) - rhs(m, t, th - h, r)) / (2 * h);
      const fdR = (rhs(m, t, th, r + h) - rhs(m, t, th, r - h)) / (2 * h);
      expect(Math.abs(dth - fdTh) / Math.max(1, Math.abs(fdTh))).toBeLessThan(1e-6);
      expect(Math.abs(dr - fdR) / Math.max(1, Math.abs(fdR))).toBeLessThan(1e-6);
    }
  });
});
