import { describe, expect, it } from 'vitest';
import { EngineCancelledError, simulateMotion } from './motion';
import { integrate, rigDerivative } from './integrate';
import { buildModel } from './equations';
import { DEMO_RIGS, templateCase } from '../case/templates';
import { caseDigest } from '../case/canonical';
import type { CaseParams } from '../case/case-schema';

const short = (c: CaseParams, duration: number, outputPoints = 500): CaseParams => ({ ...c, run: { ...c.run, duration, outputPoints } });

describe('simulateMotion', () => {
  it('reaches every demo rig\'s intended outcome', () => {
    for (const rig of DEMO_RIGS) {
      const r = simulateMotion(rig.params);
      expect(r.outcome, `${rig.id}: ${r.outcomeNumbers.reason}`).toBe(rig.expectedOutcome);
    }
  }, 30_000);

  it('runs the template and every demo rig long enough to measure the slow frequency over at least 3 slow swings', () => {
    for (const [id, params] of [['template', templateCase()], ...DEMO_RIGS.map((r) => [r.id, r.params] as const)] as const) {
      const r = simulateMotion(params);
      const n = r.outcomeNumbers;
      expect(n.slowFrequencyHz, `${id}: slow frequency not measured`).not.toBeNull();
      const judged = params.run.duration - n.windowStart;
      expect((n.slowFrequencyHz ?? 0) * judged, `${id}: slow swings judged`).toBeGreaterThanOrEqual(3);
    }
  }, 30_000);

  it('keeps every series within the output budget and memory flat in run length', () => {
    const c = short(templateCase(), 30, 300);
    const r = simulateMotion(c);
    expect(r.series.t.length).toBe(300);
    expect(r.strobe.t.length).toBeLessThanOrEqual(300);
    expect(r.slow.t.length).toBeLessThanOrEqual(300);
    expect(r.summary.periodStride).toBeGreaterThan(1);
    expect(r.series.t[299]).toBeCloseTo(30, 12);
    for (const a of [r.series.theta, r.series.energy, r.series.pivotForce, r.slow.theta]) expect(a.every(Number.isFinite)).toBe(true);
    expect(r.caseDigest).toBe(caseDigest(c));
  });

  it('samples the stroboscopic section at the requested drive phase, matching a direct integration to that instant', () => {
    const c = short({ ...templateCase(), run: { ...templateCase().run, strobePhase: 1.0 } }, 1);
    const r = simulateMotion(c);
    const k = 17;
    const tk = r.strobe.t[k];
    expect(Math.abs(tk - (1.0 + 2 * Math.PI * k) / (2 * Math.PI * 40))).toBeLessThan(1e-12);
    const direct = integrate(rigDerivative(buildModel(c)), 0, [c.start.angle, c.start.rate], tk, { rtol: 1e-12, atol: 1e-14 });
    const diff = Math.abs(direct.y[0] - r.strobe.theta[k]);
    expect(diff, `strobe ${r.strobe.theta[k]}, direct ${direct.y[0]}, difference ${diff}, tolerance 1e-7`).toBeLessThan(1e-7);
  });

  it('conserves energy in the pivot frame without drive or damping', () => {
    const c = templateCase();
    const free: CaseParams = { ...c, drive: { ...c.drive, amplitude: 0 }, damping: { ...c.damping, viscousRatio: 0 }, start: { angle: 2, rate: 0 }, run: { ...c.run, duration: 5, rtol: 1e-10, atol: 1e-12 } };
    const r = simulateMotion(free);
    const e0 = r.series.energy[0];
    let worst = 0;
    for (const e of r.series.energy) worst = Math.max(worst, Math.abs(e / e0 - 1));
    expect(worst, `largest relative energy drift ${worst}, tolerance 1e-8`).toBeLessThan(1e-8);
  });

  it('reports the drive\'s peak acceleration and a pivot force at least the static weight', () => {
    const c = short(templateCase(), 1);
    const r = simulateMotion(c);
    const w = 2 * Math.PI * 40;
    expect(Math.abs(r.summary.peakPivotAcceleration / (0.01 * w * w) - 1)).toBeLessThan(1e-9);
    expect(r.summary.peakPivotForce).toBeGreaterThan(0.1 * 9.80665);
  });

  it('reports progress and stops with EngineCancelledError when cancelled', () => {
    const fractions: number[] = [];
    simulateMotion(short(templateCase(), 2), { onProgress: (f) => fractions.push(f) });
    expect(fractions.length).toBeGreaterThan(5);
    expect(fractions.at(-1)).toBe(1);
    expect(fractions.every((f, i) => i === 0 || f >= fractions[i - 1])).toBe(true);
    let polls = 0;
    expect(() => simulateMotion(short(templateCase(), 100), { shouldCancel: () => ++polls > 3 })).toThrow(EngineCancelledError);
  });

  it('tumbles when spun hard from the upright with no drive', () => {
    const c = templateCase();
    const r = simulateMotion({ ...c, drive: { ...c.drive, amplitude: 0 }, damping: { ...c.damping, viscousRatio: 0 }, start: { angle: 0, rate: 30 }, run: { ...c.run, duration: 5 } });
    expect(r.outcome, r.outcomeNumbers.reason).toBe('tumbles');
  });

  it('falls when the drive is too weak to hold the upright', () => {
    const c = templateCase();
    const r = simulateMotion({ ...c, drive: { ...c.drive, amplitude: 0.004 }, damping: { ...c.damping, viscousRatio: 0.2 }, run: { ...c.run, duration: 10 } });
    expect(r.outcome, r.outcomeNumbers.reason).toBe('falls');
  });

  it('refuses an impossible case with its field and reason instead of computing NaN', () => {
    const c = templateCase();
    expect(() => simulateMotion({ ...c, drive: { ...c.drive, amplitude: 0.05, waveform: { kind: 'crank-slider', connectingRod: 0.04 } } })).toThrow(/drive\.waveform\.connectingRod: connecting rod/);
    expect(() => simulateMotion({ ...c, start: { angle: Number.NaN, rate: 0 } })).toThrow(/start\.angle/);
  });

  it('gives a one-term harmonics drive the same motion as the sine it equals', () => {
    const c = short(templateCase(), 2);
    const sine = simulateMotion(c);
    const harmonic = simulateMotion({ ...c, drive: { ...c.drive, waveform: { kind: 'harmonics', terms: [{ order: 1, relAmplitude: 1, phase: 0 }] } } });
    const diff = Math.abs(sine.summary.finalTheta - harmonic.summary.finalTheta);
    expect(diff, `sine ${sine.summary.finalTheta}, harmonics ${harmonic.summary.finalTheta}, difference ${diff}, tolerance 1e-6`).toBeLessThan(1e-6);
  });

  it('samples a ramped drive at whole drive cycles of its rising phase', () => {
    const c = templateCase();
    const ramped: CaseParams = { ...c, drive: { ...c.drive, ramp: { fromFrequency: 20, duration: 1 } }, run: { ...c.run, duration: 2, outputPoints: 500 } };
    const r = simulateMotion(ramped);
    const model = buildModel(ramped);
    for (let k = 0; k < r.strobe.t.length; k += 7) {
      const cycles = model.drive.phase(r.strobe.t[k]) / (2 * Math.PI);
      expect(Math.abs(cycles - k * r.summary.periodStride)).toBeLessThan(1e-9);
    }
    // 20 -> 40 Hz over 1 s, then 40 Hz for 1 s: 30 + 40 cycles
    expect(Math.abs(r.summary.drivePeriods - 70)).toBeLessThan(1e-9);
    expect(r.series.theta.every(Number.isFinite)).toBe(true);
  });
});

