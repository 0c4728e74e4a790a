import { describe, expect, it } from 'vitest';
import { bodyProperties } from './body';

const g = 9.80665;

describe('bodyProperties', () => {
  it('gives a point mass its own length and sqrt(g/L)', () => {
    const p = bodyProperties({ kind: 'point-mass', length: 0.3, mass: 2 }, g);
    expect(p.equivalentLength).toBeCloseTo(0.3, 12);
    expect(p.inertia).toBeCloseTo(0.18, 12);
    expect(p.naturalFrequency).toBeCloseTo(Math.sqrt(g / 0.3), 12);
  });

  it('turns a measured swing frequency back into the same swing frequency', () => {
    const p = bodyProperties({ kind: 'measured-swing', swingFrequency: 1.2, mass: 1 }, g);
    expect(p.swingFrequencyHz).toBeCloseTo(1.2, 12);
  });

  it('combines rod and bob by parallel axes', () => {
    const p = bodyProperties({ kind: 'rod-bob', rodLength: 0.4, rodMass: 0.3, bobMass: 0.5, bobRadius: 0.02, bobDistance: 0.35 }, g);
    const inertia = (0.3 * 0.16) / 3 + 0.4 * 0.5 * 0.0004 + 0.5 * 0.35 * 0.35;
    const d = (0.3 * 0.2 + 0.5 * 0.35) / 0.8;
    expect(p.inertia).toBeCloseTo(inertia, 12);
    expect(p.equivalentLength).toBeCloseTo(inertia / (0.8 * d), 12);
  });
});
