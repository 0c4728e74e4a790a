import { describe, it } from 'vitest';
import { simulateMotion } from '../../shared/engine/motion';
import { templateCase } from '../../shared/case/templates';
import { expectNear } from './check';

// Source: damping from a measured decay, common practice (docs/physics.md): logarithmic decrement
// delta = ln(x_k / x_{k+1}) between successive peaks, zeta = delta / sqrt(4 pi^2 + delta^2).

describe('logarithmic decrement of a free decay gives back the damping ratio (common practice)', () => {
  for (const zeta of [0.01, 0.05]) {
    it(`recovers zeta = ${zeta} from successive swing peaks (log decrement, common practice)`, () => {
      const c = templateCase();
      const r = simulateMotion({
        ...c,
        drive: { ...c.drive, amplitude: 0 },
        damping: { ...c.damping, viscousRatio: zeta },
        // a small swing about hanging down, where the motion is the linear damped oscillator
        start: { angle: Math.PI + 0.01, rate: 0 },
        run: { ...c.run, duration: 6, rtol: 1e-11, atol: 1e-14, outputPoints: 30001 },
      });
      const { t, theta } = r.series;
      const peaks: number[] = [];
      for (let i = 1; i < t.length - 1; i++) {
        const [a, b, d] = [theta[i - 1] - Math.PI, theta[i] - Math.PI, theta[i + 1] - Math.PI];
        if (b > a && b >= d) {
          // parabola through three samples
          const curvature = a - 2 * b + d;
          const shift = (0.5 * (a - d)) / curvature;
          peaks.push(b - 0.25 * (a - d) * shift);
        }
      }
      const cycles = peaks.length - 1;
      const delta = Math.log(peaks[0] / peaks[cycles]) / cycles;
      const estimate = delta / Math.sqrt(4 * Math.PI * Math.PI + delta * delta);
      // the nonlinearity at 0.01 rad shifts the estimate by about (0.01)^2 / 16 of zeta
      expectNear(estimate, zeta, 1e-4 * zeta + 1e-7, `zeta from the log decrement over ${cycles} cycles (common practice)`);
    });
  }
});
