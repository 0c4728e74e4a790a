import { describe, expect, it } from 'vitest';
import { templateCase, type CaseParams } from '../../shared/case';
import { driveLimits, floquetAnalysis } from '../../shared/engine/floquet';
import { highFrequencyUpperQ } from '../../shared/engine/mathieu';

function pointMass(length: number, amplitude: number, frequency: number, zeta: number): CaseParams {
  const c = templateCase();
  return {
    ...c,
    body: { kind: 'point-mass', length, mass: 0.1 },
    drive: { ...c.drive, amplitude, frequency },
    damping: { ...c.damping, viscousRatio: zeta },
  };
}

describe('drive limits of the upright from Floquet multipliers', () => {
  it('upper amplitude limit tends to a/L = 0.454 at very high frequency (Butikov, Am. J. Phys. 69, 755 (2001))', () => {
    const L = 0.2;
    const limits = driveLimits(pointMass(L, 0.01, 2000, 0), 'drive.amplitude', 1e-7);
    const ratio = (limits.upper ?? NaN) / L;
    // At 2 kHz, A = -4g/(L w^2) is about -1e-6, so the upper limit sits on b1(q) = A, next to b1(q) = 0.
    expect(Math.abs(ratio - 0.454), `a/L ${ratio} vs 0.454`).toBeLessThan(1e-3);
    expect(Math.abs(ratio - highFrequencyUpperQ() / 2), `a/L ${ratio} vs q*/2 ${highFrequencyUpperQ() / 2}`).toBeLessThan(1e-5);
  });

  it('lower frequency limit agrees with the averaged criterion a w = sqrt(2 g L) when a << L (Kapitza; Landau & Lifshitz section 30)', () => {
    const c = pointMass(0.5, 0.005, 100, 0);
    const f = driveLimits(c, 'drive.frequency', 1e-7).lower ?? NaN;
    const averaged = Math.sqrt(2 * c.gravity * 0.5) / (2 * Math.PI * 0.005);
    // Next-order correction of the averaged criterion is O((a/L)^2) = 1e-4 here.
    expect(Math.abs(f / averaged - 1), `Floquet ${f} Hz vs averaged ${averaged} Hz`).toBeLessThan(1e-3);
  });

  it('a body with a 1.2 Hz free swing on a 2 cm drive needs roughly 15 Hz (docs/physics.md, facts of the trade)', () => {
    const c = templateCase();
    const rig: CaseParams = {
      ...c,
      body: { kind: 'measured-swing', swingFrequency: 1.2, mass: 0.1 },
      drive: { ...c.drive, amplitude: 0.02, frequency: 25 },
      damping: { ...c.damping, viscousRatio: 0.02 },
    };
    const r = floquetAnalysis(rig);
    const f = r.frequencyLimits.lower ?? NaN;
    expect(f).toBeGreaterThan(13);
    expect(f).toBeLessThan(17);
    expect(r.uprightHolds).toBe(true);
  });

  it('damping raises the upper limit (a -1 multiplier crossing) and barely moves the lower one (a +1 crossing) (damped Mathieu equation, DLMF 28.29)', () => {
    const undamped = driveLimits(pointMass(0.2, 0.01, 40, 0), 'drive.amplitude');
    const damped = driveLimits(pointMass(0.2, 0.01, 40, 0.2), 'drive.amplitude');
    expect(damped.upper ?? NaN).toBeGreaterThan((undamped.upper ?? NaN) * (1 + 1e-4));
    const lowerShift = Math.abs((damped.lower ?? NaN) / (undamped.lower ?? NaN) - 1);
    expect(lowerShift, `lower limit moved by ${lowerShift}`).toBeLessThan(2e-4);
  });
});
