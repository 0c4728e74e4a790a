import { describe, expect, it } from 'vitest';
import { templateCase } from '../case/templates';
import type { CaseParams } from '../case/case-schema';
import { syntheticTrace } from './synthetic-trace';
import { estimateDrive, overlayDrivenTrace } from './trace-drive';

const DEG = Math.PI / 180;

function driven(frequency: number, waveform: CaseParams['drive']['waveform'] = { kind: 'sine' }): CaseParams {
  const c = templateCase();
  return { ...c, drive: { ...c.drive, frequency, waveform }, start: { angle: 0.1, rate: 0 } };
}

describe('driven traces', { timeout: 30_000 }, () => {
  it('reads amplitude and frequency of a sine drive from the pivot column', () => {
    const trace = syntheticTrace(driven(40), { sampleRate: 2000, duration: 2, noise: 0.05 * DEG, seed: 1, pivotNoise: 2e-5 });
    const d = estimateDrive(trace.time, trace.pivot ?? []);
    expect(Math.abs(d.frequency / 40 - 1)).toBeLessThan(1e-5);
    expect(Math.abs(d.amplitude / 0.01 - 1)).toBeLessThan(1e-3);
    expect(d.rampRate).toBe(0);
    expect(d.secondAmplitude).toBeLessThan(1e-5);
  });

  it('reads the second harmonic of a crank (about r^2 / 4l) and a frequency ramp', () => {
    const time = Array.from({ length: 8001 }, (_, i) => i / 2000);
    const r = 0.01;
    const l = 0.05;
    // crank-slider at a frequency falling from 40 Hz at 2 Hz/s
    const pivot = time.map((t) => {
      const phi = 2 * Math.PI * (40 * t - t * t);
      return r * Math.cos(phi) + Math.sqrt(l * l - r * r * Math.sin(phi) ** 2) - l;
    });
    const d = estimateDrive(time, pivot);
    expect(Math.abs(d.rampRate + 2)).toBeLessThan(0.02);
    expect(Math.abs(d.frequency - 40)).toBeLessThan(0.02);
    expect(Math.abs(d.secondAmplitude / (r * r / (4 * l)) - 1)).toBeLessThan(0.05);
  });

  it('overlays a held trace with the simulation: small difference, no loss of hold', () => {
    const trace = syntheticTrace(driven(40), { sampleRate: 2000, duration: 3, noise: 0.05 * DEG, seed: 2, pivotNoise: 1e-5 });
    const o = overlayDrivenTrace(driven(40), { time: trace.time, angle: trace.angle, pivot: trace.pivot ?? [] });
    expect(o.rmsDifference).toBeLessThan(0.5 * DEG);
    expect(o.partTime).toBeNull();
    expect(o.lossOfHold.measured).toBeNull();
    expect(o.lossOfHold.simulated).toBeNull();
    expect(o.lossOfHold.floquetLower).toBeGreaterThan(25);
    expect(o.slowTime.length).toBeGreaterThan(100);
  });

  it('finds the loss of hold below the lower limit in the trace and in the model, and the Floquet limit above it', () => {
    const trace = syntheticTrace(driven(28), { sampleRate: 2000, duration: 4, noise: 0.05 * DEG, seed: 3, pivotNoise: 1e-5 });
    const o = overlayDrivenTrace(driven(28), { time: trace.time, angle: trace.angle, pivot: trace.pivot ?? [] });
    const loss = o.lossOfHold;
    expect(loss.measured).not.toBeNull();
    expect(loss.simulated).not.toBeNull();
    expect(Math.abs((loss.measured?.time ?? 0) - (loss.simulated?.time ?? 99))).toBeLessThan(0.05);
    expect(Math.abs((loss.measured?.frequency ?? 0) - 28)).toBeLessThan(0.01);
    expect(loss.floquetPredicted).toBeGreaterThan(28);
    expect(loss.differenceHz).toBeLessThan(0);
    expect(loss.differencePercent).toBeCloseTo((100 * (loss.differenceHz ?? 0)) / (loss.floquetPredicted ?? 1), 10);
  });
});
