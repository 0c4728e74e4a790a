import { describe, expect, it } from 'vitest';
import { classifyMotion, slowFrequency } from './classify';

function series(n: number, f: (t: number) => number, dt = 0.01) {
  const t = Float64Array.from({ length: n }, (_, i) => i * dt);
  return { t, theta: t.map(f) };
}

describe('classifyMotion', () => {
  it('holds-upright for a small slow oscillation about the upright, with its frequency', () => {
    const s = series(1000, (t) => 0.1 * Math.sin(2 * Math.PI * 2 * t));
    const r = classifyMotion(s.t, s.theta, 0, 'completed');
    expect(r.outcome).toBe('holds-upright');
    expect(Math.abs((r.numbers.slowFrequencyHz ?? 0) - 2)).toBeLessThan(0.02);
  });

  it('settles-tilted at a fixed off-vertical angle, falls at hanging down, tumbles when turning', () => {
    const tilted = series(500, () => 2.4);
    expect(classifyMotion(tilted.t, tilted.theta, 0, 'completed').outcome).toBe('settles-tilted');
    const down = series(500, (t) => -Math.PI + 0.01 * Math.sin(t));
    expect(classifyMotion(down.t, down.theta, 0, 'completed').outcome).toBe('falls');
    const swinging = series(500, (t) => Math.PI + 1.2 * Math.sin(3 * t));
    expect(classifyMotion(swinging.t, swinging.theta, 0, 'completed').outcome).toBe('falls');
    const turning = series(500, (t) => 5 * t);
    expect(classifyMotion(turning.t, turning.theta, 0, 'completed').outcome).toBe('tumbles');
  });

  it('ignores the transient window and calls an unfinished integration irregular', () => {
    const s = series(1000, (t) => (t < 5 ? 3 : 0.01));
    expect(classifyMotion(s.t, s.theta, 5, 'completed').outcome).toBe('holds-upright');
    expect(classifyMotion(s.t, s.theta, 5, 'non-finite').outcome).toBe('irregular');
  });

  it('returns null slow frequency without enough crossings', () => {
    const s = series(100, () => 0.2);
    expect(slowFrequency(s.t, s.theta, 0, 0.2)).toBeNull();
  });
});
