import { describe, expect, it } from 'vitest';
import {
  floquetBoundaries, highFrequencyUpperQ, mathieuA, mathieuB, mathieuDiscriminant, mathieuMapping,
} from '../../shared/engine/mathieu';

/** Relative closeness with a message that prints value, reference, difference and tolerance. */
function expectClose(value: number, reference: number, relTol: number, what: string): void {
  const diff = Math.abs(value - reference);
  const tol = relTol * Math.max(1, Math.abs(reference));
  expect(diff, `${what}: value ${value}, reference ${reference}, diff ${diff}, tol ${tol}`).toBeLessThanOrEqual(tol);
}

// Source: M. Abramowitz & I. Stegun, Handbook of Mathematical Functions (1964), Table 20.1 (DLMF section 28),
// the 10-digit values listed in docs/physics.md.
const TABLE_20_1 = [
  { q: 1, a0: -0.4551386041, b1: -0.1102488170, a1: 1.859108073, b2: 3.917024773, a2: 4.371300983 },
  { q: 5, a0: -5.800046021, b1: -5.790080599, a1: 1.858187542, b2: 2.099460445, a2: 7.449109740 },
];

describe('Mathieu characteristic values from the Hill matrix', () => {
  for (const row of TABLE_20_1) {
    it(`match A&S Table 20.1 at q = ${row.q} to 1e-9`, () => {
      expectClose(mathieuA(0, row.q), row.a0, 1e-9, 'a0 (A&S Table 20.1)');
      expectClose(mathieuB(1, row.q), row.b1, 1e-9, 'b1 (A&S Table 20.1)');
      expectClose(mathieuA(1, row.q), row.a1, 1e-9, 'a1 (A&S Table 20.1)');
      expectClose(mathieuB(2, row.q), row.b2, 1e-9, 'b2 (A&S Table 20.1)');
      expectClose(mathieuA(2, row.q), row.a2, 1e-9, 'a2 (A&S Table 20.1)');
    });
  }

  it('reduce to n^2 at q = 0 (DLMF 28.6)', () => {
    expectClose(mathieuA(0, 0), 0, 1e-12, 'a0(0)');
    expectClose(mathieuB(1, 0), 1, 1e-12, 'b1(0)');
    expectClose(mathieuA(3, 0), 9, 1e-12, 'a3(0)');
    expectClose(mathieuB(4, 0), 16, 1e-12, 'b4(0)');
  });
});

describe('Mathieu stability boundaries from Floquet multipliers alone', () => {
  for (const row of TABLE_20_1) {
    it(`reproduce a0 < b1 < a1 < b2 < a2 at q = ${row.q} (A&S Table 20.1)`, () => {
      const [a0, b1, a1, b2, a2] = floquetBoundaries(row.q, 5);
      expectClose(a0, row.a0, 1e-8, 'a0 by Floquet (A&S Table 20.1)');
      expectClose(b1, row.b1, 1e-8, 'b1 by Floquet (A&S Table 20.1)');
      expectClose(a1, row.a1, 1e-8, 'a1 by Floquet (A&S Table 20.1)');
      expectClose(b2, row.b2, 1e-8, 'b2 by Floquet (A&S Table 20.1)');
      expectClose(a2, row.a2, 1e-8, 'a2 by Floquet (A&S Table 20.1)');
    });
  }

  it('is stable (|trace| < 2) strictly between a0 and b1 and unstable just outside (DLMF 28.17)', () => {
    const q = 1;
    const a0 = mathieuA(0, q);
    const b1 = mathieuB(1, q);
    expect(Math.abs(mathieuDiscriminant(0.5 * (a0 + b1), q))).toBeLessThan(2);
    expect(mathieuDiscriminant(a0 - 0.01, q)).toBeGreaterThan(2);
    expect(mathieuDiscriminant(b1 + 0.01, q)).toBeLessThan(-2);
  });
});

describe('upper limit of the upright at very high drive frequency', () => {
  it('b1(q) = 0 at q close to 0.908, so a/L tends to about 0.454 (Butikov, Am. J. Phys. 69, 755 (2001))', () => {
    const q = highFrequencyUpperQ();
    expectClose(q, 0.908, 1e-3, 'q at b1 = 0 (Butikov 2001)');
    expectClose(q / 2, 0.454, 1e-3, 'a/L upper limit (Butikov 2001)');
  });

  it('maps a vertical drive to A = -4g/(L w^2), q = 2a/L', () => {
    const p = mathieuMapping(0.2, 9.80665, 2 * Math.PI * 40, 0.01);
    expectClose(p.A, -4 * 9.80665 / (0.2 * (2 * Math.PI * 40) ** 2), 1e-14, 'A');
    expectClose(p.q, 0.1, 1e-14, 'q');
  });
});
