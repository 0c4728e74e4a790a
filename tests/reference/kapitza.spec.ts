import { describe, expect, it } from 'vitest';
import { averagedAnalysis, averagedLowerAmplitude, averagedLowerFrequency } from '../../shared/engine/averaged';
import { simulateMotion } from '../../shared/engine/motion';
import { templateCase } from '../../shared/case/templates';
import type { CaseParams } from '../../shared/case/case-schema';
import { expectNear, expectRelative } from './check';

// Source for every check in this file: P. L. Kapitza, Zh. Eksp. Teor. Fiz. 21, 588 (1951); L. D. Landau &
// E. M. Lifshitz, Mechanics, section 30 (docs/physics.md): the upright holds with a vertical drive iff
// a^2 w^2 > 2 g L, slow frequency Omega^2 = a^2 w^2 / (2 L^2) - g / L; horizontal drive tilts the body to
// cos(phi*) = 2 g L / (a^2 w^2), phi* from the downward vertical.

const g = 9.80665;
const L = 0.2;

function vertical(amplitude: number, frequency: number, extra: Partial<CaseParams> = {}): CaseParams {
  const c = templateCase();
  return { ...c, drive: { ...c.drive, amplitude, frequency }, ...extra };
}

describe('Kapitza (1951) / Landau & Lifshitz section 30: upright with a vertical drive', () => {
  it('averaged.ts puts the lower limit at a^2 w^2 = 2 g L, in amplitude and in frequency (Kapitza 1951)', () => {
    const f = 200;
    const w = 2 * Math.PI * f;
    const aRef = Math.sqrt(2 * g * L) / w;
    expectRelative(averagedLowerAmplitude(vertical(0.003, f), f) as number, aRef, 1e-9, 'lower amplitude vs sqrt(2gL)/w (Kapitza 1951)');
    const fRef = Math.sqrt(2 * g * L) / 0.003 / (2 * Math.PI);
    expectRelative(averagedLowerFrequency(vertical(0.003, f), 0.003) as number, fRef, 1e-9, 'lower frequency vs sqrt(2gL)/a (Kapitza 1951)');
  });

  it('the simulated upright holds above the Kapitza limit and falls below it at a fast drive (Kapitza 1951)', () => {
    const f = 200;
    const aRef = Math.sqrt(2 * g * L) / (2 * Math.PI * f);
    const run = { ...templateCase().run, duration: 4, outputPoints: 500 };
    const damping = { ...templateCase().damping, viscousRatio: 0.1 };
    const above = simulateMotion(vertical(1.25 * aRef, f, { run, damping }));
    const below = simulateMotion(vertical(0.8 * aRef, f, { run, damping }));
    expect(above.outcome, `1.25 x the Kapitza amplitude (Kapitza 1951): ${above.outcomeNumbers.reason}`).toBe('holds-upright');
    expect(below.outcome, `0.8 x the Kapitza amplitude (Kapitza 1951): ${below.outcomeNumbers.reason}`).toBe('falls');
  });

  it('the integrated slow motion has the frequency Omega^2 = a^2 w^2/(2L^2) - g/L at a fast drive (Landau & Lifshitz section 30)', () => {
    const f = 400;
    const w = 2 * Math.PI * f;
    const a = (2 * Math.sqrt(2 * g * L)) / w; // stiffness ratio 4
    const omegaRef = Math.sqrt((a * a * w * w) / (2 * L * L) - g / L);
    const c = vertical(a, f, {
      damping: { ...templateCase().damping, viscousRatio: 0 },
      start: { angle: 0.02, rate: 0 },
      run: { ...templateCase().run, duration: 6, transientFraction: 0, outputPoints: 4000, rtol: 1e-10, atol: 1e-12 },
    });
    const averaged = averagedAnalysis(c).uprightSlowFrequency as number;
    expectRelative(averaged, omegaRef, 1e-9, 'averaged.ts slow frequency vs the closed form (Landau & Lifshitz section 30)');
    const measured = 2 * Math.PI * (simulateMotion(c).outcomeNumbers.slowFrequencyHz as number);
    // the averaged theory's own corrections are O((a/L)^2) and O((Omega/w)^2), both below 1e-4 here; the
    // tolerance also covers reading the frequency from about 20 mean-crossings of the slow motion
    expectRelative(measured, omegaRef, 0.005, 'simulated slow frequency vs Omega (Landau & Lifshitz section 30)');
  });
});

describe('Kapitza (1951) / Landau & Lifshitz section 30: horizontal drive tilts the body', () => {
  const f = 100;
  const a = 0.004;
  const length = 0.25;
  const w = 2 * Math.PI * f;
  const phiRef = Math.acos((2 * g * length) / (a * a * w * w));
  const c = (): CaseParams => {
    const base = templateCase();
    return {
      ...base,
      body: { kind: 'point-mass', length, mass: 0.2 },
      drive: { ...base.drive, direction: Math.PI / 2, amplitude: a, frequency: f },
      damping: { ...base.damping, viscousRatio: 0.1 },
      start: { angle: Math.PI - 0.2, rate: 0 },
      run: { ...base.run, duration: 8, transientFraction: 0.6, outputPoints: 1000 },
    };
  };

  it('averaged.ts gives cos(phi*) = 2gL/(a^2 w^2) (Landau & Lifshitz section 30)', () => {
    expectNear(averagedAnalysis(c()).tiltFromDown as number, phiRef, 1e-9, 'tilt from down vs acos(2gL/(a^2 w^2)) (Landau & Lifshitz section 30)');
  });

  it('the simulated mean angle settles at the predicted tilt (Landau & Lifshitz section 30)', () => {
    const r = simulateMotion(c());
    expect(r.outcome, r.outcomeNumbers.reason).toBe('settles-tilted');
    const tilt = Math.PI - Math.abs(r.outcomeNumbers.meanAngle);
    // averaged theory's corrections are O(a/L) = 1.6 % at most and much smaller in practice: allow 1 %
    expectRelative(tilt, phiRef, 0.01, 'simulated tilt from down vs acos(2gL/(a^2 w^2)) (Landau & Lifshitz section 30)');
  });
});
