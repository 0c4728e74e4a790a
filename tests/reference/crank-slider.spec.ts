import { describe, it } from 'vitest';
import { driveKinematics } from '../../shared/engine/drive';
import type { Drive } from '../../shared/case/case-schema';
import { expectNear, expectRelative } from './check';

// Source: crank-slider kinematics, any machine-design handbook (docs/physics.md): slider position
// x = r cos(wt) + sqrt(l^2 - r^2 sin^2(wt)); stroke 2r; l -> infinity gives the sine r cos(wt).

const r = 0.02;
const f = 16.5;
const w = 2 * Math.PI * f;
const crank = (l: number): Drive => ({ direction: 0, amplitude: r, frequency: f, waveform: { kind: 'crank-slider', connectingRod: l } });

describe('crank-slider kinematics (machine-design handbook)', () => {
  it('follows x = r cos wt + sqrt(l^2 - r^2 sin^2 wt), measured from l (machine-design handbook)', () => {
    const l = 0.07;
    const k = driveKinematics(crank(l));
    for (let i = 0; i < 50; i++) {
      const t = (i * 0.9) / (50 * f);
      const x = r * Math.cos(w * t) + Math.sqrt(l * l - r * r * Math.sin(w * t) ** 2);
      expectNear(k.position(t), x - l, 1e-15, `slider position at t = ${t} (machine-design handbook)`);
    }
  });

  it('has a stroke of 2r for any connecting rod (machine-design handbook)', () => {
    for (const l of [0.021, 0.05, 1]) expectRelative(driveKinematics(crank(l)).stroke, 2 * r, 1e-9, `stroke with l = ${l} (machine-design handbook)`);
  });

  it('tends to the sine as l grows, the gap shrinking like r^2 / l (machine-design handbook)', () => {
    for (const l of [0.2, 2, 20]) {
      const k = driveKinematics(crank(l));
      let gap = 0;
      for (let i = 0; i < 400; i++) {
        const t = i / (400 * f);
        gap = Math.max(gap, Math.abs(k.position(t) - r * Math.cos(w * t)));
      }
      // leading term of the expansion: sqrt(l^2 - r^2 sin^2) - l = -r^2 sin^2 / (2l) + O(r^4 / l^3)
      expectRelative(gap, (r * r) / (2 * l), 0.02, `largest gap to the sine with l = ${l} vs r^2/(2l) (machine-design handbook)`);
    }
  });
});
