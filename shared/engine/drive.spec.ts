import { describe, expect, it } from 'vitest';
import { driveKinematics } from './drive';
import type { Drive } from '../case/case-schema';

const sine: Drive = { direction: 0, amplitude: 0.01, frequency: 40, waveform: { kind: 'sine' } };

function numericDerivative(f: (t: number) => number, t: number, h: number): number {
  return (f(t - 2 * h) - 8 * f(t - h) + 8 * f(t + h) - f(t + 2 * h)) / (12 * h);
}

describe('driveKinematics', () => {
  it('gives a sine its textbook velocity and acceleration levels', () => {
    const k = driveKinematics(sine);
    const w = 2 * Math.PI * 40;
    expect(k.meanSquareVelocity / ((0.01 * w) ** 2 / 2) - 1).toBeLessThan(1e-12);
    expect(Math.abs(k.peakVelocity / (0.01 * w) - 1)).toBeLessThan(1e-9);
    expect(Math.abs(k.peakAcceleration / (0.01 * w * w) - 1)).toBeLessThan(1e-9);
    expect(Math.abs(k.stroke / 0.02 - 1)).toBeLessThan(1e-9);
    expect(k.periodic).toBe(true);
  });

  it('has velocity and acceleration consistent with position for every waveform and a ramp', () => {
    const drives: Drive[] = [
      { ...sine, waveform: { kind: 'crank-slider', connectingRod: 0.03 } },
      { ...sine, waveform: { kind: 'harmonics', terms: [{ order: 1, relAmplitude: 1, phase: 0 }, { order: 3, relAmplitude: 0.2, phase: 0.4 }] } },
      { ...sine, ramp: { fromFrequency: 5, duration: 0.5 } },
    ];
    for (const d of drives) {
      const k = driveKinematics(d);
      for (const t of [0.0123, 0.31, 0.77]) {
        const h = 1e-5;
        const v = numericDerivative(k.position, t, h);
        const acc = numericDerivative(k.velocity, t, h);
        expect(Math.abs(v - k.velocity(t)), `${d.waveform.kind} v at ${t}`).toBeLessThan(1e-7 * k.peakVelocity);
        expect(Math.abs(acc - k.acceleration(t)), `${d.waveform.kind} a at ${t}`).toBeLessThan(1e-6 * k.peakAcceleration);
      }
    }
  });

  it('inverts the ramp phase', () => {
    const k = driveKinematics({ ...sine, ramp: { fromFrequency: 5, duration: 0.5 } });
    for (const t of [0.01, 0.3, 0.5, 2.2]) expect(Math.abs(k.timeAtPhase(k.phase(t)) - t)).toBeLessThan(1e-12);
    expect(k.periodic).toBe(false);
  });
});
