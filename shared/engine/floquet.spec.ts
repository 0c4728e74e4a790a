import { describe, expect, it } from 'vitest';
import { DEMO_RIGS, templateCase, setField, type CaseParams } from '../case';
import { driveLimits, floquetAnalysis, uprightMaxMultiplier, uprightMonodromy } from './floquet';
import { bisect, mathieuA, mathieuB } from './mathieu';
import { periodMap } from './period-map';
import { periodicSystem } from './periodic-system';

function expectClose(value: number, reference: number, relTol: number, what: string): void {
  const diff = Math.abs(value - reference);
  const tol = relTol * Math.abs(reference);
  expect(diff, `${what}: value ${value}, reference ${reference}, diff ${diff}, tol ${tol}`).toBeLessThanOrEqual(tol);
}

function undamped(c: CaseParams): CaseParams {
  return setField(c, 'damping.viscousRatio', 0);
}

describe('floquetAnalysis', () => {
  it('finds the undamped lower and upper amplitude limits where A = a0(q) and A = b1(q) (A&S ch. 20)', () => {
    const c = undamped(templateCase());
    const L = 0.2;
    const g = c.gravity;
    const omega = 2 * Math.PI * c.drive.frequency;
    const A = -4 * g / (L * omega * omega);
    // Independent reference: solve a0(2a/L) = A and b1(2a/L) = A for a with the Hill-matrix values.
    const lowerRef = bisect((a) => mathieuA(0, 2 * a / L) - A, 1e-5, 0.05, 1e-14);
    const upperRef = bisect((a) => mathieuB(1, 2 * a / L) - A, 0.05, 0.2, 1e-14);
    const limits = driveLimits(c, 'drive.amplitude', 1e-7);
    expect(limits.lower).not.toBeNull();
    expect(limits.upper).not.toBeNull();
    expectClose(limits.lower ?? NaN, lowerRef, 1e-5, 'lower amplitude vs a0(q) = A');
    expectClose(limits.upper ?? NaN, upperRef, 1e-5, 'upper amplitude vs b1(q) = A');
  });

  it('locates damped limits to the stated tolerance: the multiplier crosses 1 there', () => {
    const c = templateCase();
    const tol = 1e-6;
    const limits = driveLimits(c, 'drive.frequency', tol);
    const f = limits.lower ?? NaN;
    expect(uprightMaxMultiplier(setField(c, 'drive.frequency', f * (1 - 3 * tol)))).toBeGreaterThan(1);
    expect(uprightMaxMultiplier(setField(c, 'drive.frequency', f * (1 + 3 * tol)))).toBeLessThan(1);
    // Averaged theory (Kapitza; Landau & Lifshitz section 30): a w > sqrt(2 g L), a fair estimate at q = 0.1.
    expectClose(f, Math.sqrt(2 * c.gravity * 0.2) / (2 * Math.PI * 0.01), 0.01, 'lower frequency vs averaged theory');
    // q = 0.1 < 0.908: stable up to any frequency (Butikov 2001), so no upper frequency limit.
    expect(limits.upper).toBeNull();
  });

  it('gets the same upright monodromy from the Magnus linearisation and from odex variational equations', () => {
    for (const rig of [templateCase(), DEMO_RIGS[0].params, DEMO_RIGS[1].params]) {
      const sys = periodicSystem(rig);
      const magnus = uprightMonodromy(sys);
      const odex = periodMap(sys, 0, 0).monodromy;
      for (let i = 0; i < 4; i++) {
        const scale = Math.max(1, Math.abs(odex[i]));
        expect(Math.abs(magnus[i] - odex[i]), `entry ${i}: magnus ${magnus[i]} odex ${odex[i]}`).toBeLessThan(1e-8 * scale);
      }
    }
  });

  it('gives multipliers whose product is exp(-2 zeta w0 T) (Liouville formula)', () => {
    const c = templateCase();
    const r = floquetAnalysis(c);
    if (!r.upright) throw new Error('no upright found');
    const [m1, m2] = r.upright.multipliers;
    const product = m1.re * m2.re - m1.im * m2.im;
    const w0 = Math.sqrt(c.gravity / 0.2);
    expectClose(product, Math.exp(-2 * c.damping.viscousRatio * w0 * r.period), 1e-8, 'det of monodromy');
    expect(r.uprightHolds).toBe(true);
    expect(r.marginPercent ?? 0).toBeGreaterThan(0);
  });

  it('finds the stable tilted motion of a horizontally shaken arm near cos(phi) = 2gL/(a w)^2 (Landau & Lifshitz section 30)', () => {
    const rig = DEMO_RIGS.find((d) => d.id === 'horizontal-arm')?.params ?? templateCase();
    const r = floquetAnalysis(rig);
    const tilted = r.periodicMotions.filter((m) => m.kind === 'tilted' && m.stable);
    expect(tilted.length).toBe(2);
    const aw = rig.drive.amplitude * 2 * Math.PI * rig.drive.frequency;
    const phi = Math.acos(2 * rig.gravity * 0.25 / (aw * aw));
    for (const m of tilted) {
      // Angle from the downward vertical; the averaged theory is good to O((a/L)^2) here.
      const fromDown = Math.PI - Math.abs(m.meanAngle);
      expect(Math.abs(fromDown - phi), `tilt ${fromDown} vs averaged ${phi}`).toBeLessThan(0.02);
    }
    expect(r.uprightHolds).toBe(false);
  });

  it('reports the upright lost below the lower limit', () => {
    const c = setField(templateCase(), 'drive.frequency', 25);
    const r = floquetAnalysis(c);
    expect(r.uprightHolds).toBe(false);
    expect(r.upright?.maxMultiplier ?? 0).toBeGreaterThan(1);
    expect(r.frequencyLimits.marginPercent ?? 0).toBeLessThan(0);
  });
});
