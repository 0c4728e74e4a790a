import { describe, expect, it } from 'vitest';
import { templateCase } from '../case/templates';
import { driveKinematics } from './drive';
import { noiseMaxStep, noiseSignal, noisyDrive } from './drive-noise';
import { simulateMotion } from './motion';

describe('drive noise', () => {
  it('a realisation has the stated RMS (variance S B) and exact derivatives', () => {
    const n = noiseSignal(2e-6, 50, 42);
    expect(n.rms).toBeCloseTo(Math.sqrt(2e-6 * 50), 15);
    // time average of x^2 over many periods of the lowest band (1 / dF = 1.28 s)
    let sum = 0;
    const steps = 40_000;
    for (let i = 0; i < steps; i++) sum += n.value(i * 1e-3) ** 2;
    expect(Math.sqrt(sum / steps) / n.rms).toBeGreaterThan(0.9);
    expect(Math.sqrt(sum / steps) / n.rms).toBeLessThan(1.1);
    const h = 1e-6;
    for (const t of [0.1, 0.37, 2.5]) {
      expect((n.value(t + h) - n.value(t - h)) / (2 * h)).toBeCloseTo(n.rate(t), 6);
      expect((n.rate(t + h) - n.rate(t - h)) / (2 * h)).toBeCloseTo(n.accel(t), 2);
    }
  });

  it('is reproducible from its seed and differs between seeds', () => {
    expect(noiseSignal(1e-6, 20, 7).value(0.3)).toBe(noiseSignal(1e-6, 20, 7).value(0.3));
    expect(noiseSignal(1e-6, 20, 7).value(0.3)).not.toBe(noiseSignal(1e-6, 20, 8).value(0.3));
  });

  it('phase jitter of zero RMS leaves the drive as it was; the step cap is a quarter period of the top band', () => {
    const d = driveKinematics(templateCase().drive);
    const noisy = noisyDrive(d, { kind: 'phase-jitter', rms: 0, bandwidth: 80, seed: 3 });
    for (const t of [0, 0.013, 0.4]) {
      expect(noisy.position(t)).toBe(d.position(t));
      expect(noisy.acceleration(t)).toBeCloseTo(d.acceleration(t), 9);
    }
    expect(noiseMaxStep({ kind: 'phase-jitter', rms: 0, bandwidth: 80, seed: 3 })).toBe(1 / 320);
  });

  it('the motion run integrates with the noisy drive: same seed, same bits; other seed, other motion', () => {
    const base = { ...templateCase(), run: { ...templateCase().run, duration: 2 } };
    const noisy = { ...base, noise: { kind: 'amplitude' as const, density: 1e-8, bandwidth: 200, seed: 5 } };
    const a = simulateMotion(noisy);
    const b = simulateMotion(noisy);
    const c = simulateMotion({ ...noisy, noise: { ...noisy.noise, seed: 6 } });
    const nominal = simulateMotion(base);
    expect(a.status).toBe('completed');
    expect(Array.from(a.series.theta)).toEqual(Array.from(b.series.theta));
    expect(a.series.pivotPosition[100]).not.toBe(nominal.series.pivotPosition[100]);
    expect(a.series.theta.at(-1)).not.toBe(c.series.theta.at(-1));
    expect(a.caseDigest).not.toBe(nominal.caseDigest);
  }, 60_000);
});
