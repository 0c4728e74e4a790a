import { describe, expect, it } from 'vitest';
import { driveSizing } from './sizing';
import { averagedAnalysis } from './averaged';
import { templateCase } from '../case/templates';

describe('driveSizing', () => {
  it('gives sine vibration levels and the static-plus-dynamic pivot force', () => {
    const c = templateCase();
    const s = driveSizing(c);
    const w = 2 * Math.PI * 40;
    expect(Math.abs(s.peakVelocity / (0.01 * w) - 1)).toBeLessThan(1e-9);
    expect(Math.abs(s.peakAccelerationG / ((0.01 * w * w) / 9.80665) - 1)).toBeLessThan(1e-9);
    expect(Math.abs(s.pivotForcePeak / (0.1 * (0.01 * w * w + 9.80665)) - 1)).toBeLessThan(1e-9);
  });

  it('sizes amplitude and motor speed that reach the target ratio', () => {
    const c = templateCase();
    const s = driveSizing(c, { targetRatio: 2 });
    expect(averagedAnalysis({ ...c, drive: { ...c.drive, amplitude: s.amplitudeForTarget as number } }).stiffnessRatio).toBeCloseTo(2, 9);
    expect(averagedAnalysis({ ...c, drive: { ...c.drive, frequency: s.frequencyForTarget as number } }).stiffnessRatio).toBeCloseTo(2, 9);
    expect(s.motorSpeedRpm).toBeCloseTo((s.frequencyForTarget as number) * 60, 9);
  });

  it('checks a shaker envelope', () => {
    const c = templateCase();
    const small = driveSizing(c, { shaker: { maxForce: 50, maxStroke: 0.025, maxVelocity: 1.5, movingMass: 0.3 } }).shaker;
    expect(small?.fits).toBe(false);
    expect(small?.forceUse).toBeGreaterThan(1);
    const big = driveSizing(c, { shaker: { maxForce: 1000, maxStroke: 0.05, maxVelocity: 3, movingMass: 0.3 } }).shaker;
    expect(big?.fits).toBe(true);
  });
});
