import { describe, it } from 'vitest';
import { bodyProperties } from '../../shared/engine/body';
import { expectRelative } from './check';

// Source: rigid (physical) pendulum, any mechanics handbook (docs/physics.md): L = I_pivot / (m d); a uniform rod
// hinged at its end has L = 2/3 of its length; a solid sphere of radius R centred at D has I = (2/5) m R^2 + m D^2.

const g = 9.80665;

describe('rigid pendulum formulas (mechanics handbook)', () => {
  it('gives a uniform rod on its end an equivalent length of 2/3 its length (mechanics handbook)', () => {
    for (const length of [0.1, 0.5, 2]) {
      const p = bodyProperties({ kind: 'rod-bob', rodLength: length, rodMass: 0.4, bobMass: 0, bobRadius: 0, bobDistance: 0 }, g);
      expectRelative(p.equivalentLength, (2 / 3) * length, 1e-14, `uniform rod of ${length} m: L vs 2/3 of its length (mechanics handbook)`);
    }
  });

  it('gives a sphere on a massless rod I = 2/5 m R^2 + m D^2 and L = I / (m D) (mechanics handbook)', () => {
    const m = 0.5;
    const R = 0.04;
    const D = 0.3;
    const p = bodyProperties({ kind: 'rod-bob', rodLength: 0.32, rodMass: 0, bobMass: m, bobRadius: R, bobDistance: D }, g);
    const I = 0.4 * m * R * R + m * D * D;
    expectRelative(p.inertia, I, 1e-14, 'sphere inertia vs 2/5 m R^2 + m D^2 (mechanics handbook)');
    expectRelative(p.equivalentLength, I / (m * D), 1e-14, 'sphere L vs I/(m D) (mechanics handbook)');
  });

  it('combines a rod and a sphere into L = I_total / (m_total d) (mechanics handbook)', () => {
    const p = bodyProperties({ kind: 'rod-bob', rodLength: 0.4, rodMass: 0.2, bobMass: 0.5, bobRadius: 0.03, bobDistance: 0.38 }, g);
    const I = (0.2 * 0.4 * 0.4) / 3 + 0.4 * 0.5 * 0.03 * 0.03 + 0.5 * 0.38 * 0.38;
    const d = (0.2 * 0.2 + 0.5 * 0.38) / 0.7;
    expectRelative(p.equivalentLength, I / (0.7 * d), 1e-14, 'rod + sphere L vs I/(m d) (mechanics handbook)');
  });
});
