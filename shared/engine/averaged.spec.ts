import { describe, expect, it } from 'vitest';
import { averagedAnalysis, averagedLowerAmplitude, averagedLowerFrequency, effectivePotential } from './averaged';
import { templateCase } from '../case/templates';
import type { CaseParams } from '../case/case-schema';

const g = 9.80665;

describe('averagedAnalysis', () => {
  it('finds the upright, hanging and no tilted equilibria for a vertical sine drive above threshold', () => {
    const a = averagedAnalysis(templateCase());
    expect(a.uprightStable).toBe(true);
    const angles = a.equilibria.map((e) => e.angle);
    expect(angles.some((x) => Math.abs(x) < 1e-9)).toBe(true);
    expect(angles.some((x) => Math.abs(Math.abs(x) - Math.PI) < 1e-9)).toBe(true);
    expect(a.potential.theta.length).toBe(a.potential.value.length);
  });

  it('has lower thresholds that put the stiffness ratio at exactly 1', () => {
    const c = templateCase();
    const aMin = averagedLowerAmplitude(c, 40) as number;
    const fMin = averagedLowerFrequency(c, 0.01) as number;
    expect(averagedAnalysis({ ...c, drive: { ...c.drive, amplitude: aMin } }).stiffnessRatio).toBeCloseTo(1, 9);
    expect(averagedAnalysis({ ...c, drive: { ...c.drive, frequency: fMin } }).stiffnessRatio).toBeCloseTo(1, 9);
  });

  it('solves the crank-slider threshold by bisection, between the sine value and less', () => {
    const c = templateCase();
    const crank: CaseParams = { ...c, drive: { ...c.drive, waveform: { kind: 'crank-slider', connectingRod: 0.03 } } };
    const aCrank = averagedLowerAmplitude(crank, 40) as number;
    const aSine = averagedLowerAmplitude(c, 40) as number;
    expect(aCrank).toBeLessThan(aSine);
    expect(averagedAnalysis({ ...crank, drive: { ...crank.drive, amplitude: aCrank } }).stiffnessRatio).toBeCloseTo(1, 8);
  });

  it('has equilibria where the sampled potential has its extremes', () => {
    const c = templateCase();
    const diag: CaseParams = { ...c, drive: { ...c.drive, direction: 0.6 } };
    const a = averagedAnalysis(diag);
    for (const e of a.equilibria) {
      const h = 1e-4;
      const u = (th: number) => effectivePotential(th, g, 0.2, a.meanSquareVelocity, 0.6);
      const d2 = u(e.angle + h) - 2 * u(e.angle) + u(e.angle - h);
      expect(d2 > 0).toBe(e.stable);
      expect(Math.abs(u(e.angle + h) - u(e.angle - h)) / (2 * h)).toBeLessThan(1e-6);
    }
  });

  it('refuses an impossible case with its field instead of returning NaN', () => {
    const c = templateCase();
    expect(() => averagedAnalysis({ ...c, body: { kind: 'point-mass', length: -1, mass: 1 } })).toThrow(/body\.length/);
  });
});

