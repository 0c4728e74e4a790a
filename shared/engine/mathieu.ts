/**
 * The Mathieu equation y'' + (a - 2q cos 2x) y = 0 and the upright of a vertically driven pendulum.
 *
 * Linearised about the upright, theta'' = (1/L)(g + s''(t)) theta with s = a_d cos(wt). With x = wt/2 this is the
 * Mathieu equation with A = -4g/(L w^2) and 2q = -4 a_d/L; the sign of q only shifts x by pi/2, so q = 2 a_d/L is
 * used. Undamped, the upright holds for a0(q) < A < b1(q) (Abramowitz & Stegun, Handbook of Mathematical
 * Functions (1964), ch. 20; NIST DLMF section 28.17).
 */
import { Mat2, magnusMonodromy, richardson4 } from './monodromy';
import { portable } from './portable-math';

const { cos } = portable;

/** Dimensionless Mathieu parameters of the upright under a vertical sine drive. */
export interface MathieuPoint {
  /** A = -4 g / (L w^2). */
  readonly A: number;
  /** q = 2 a / L. */
  readonly q: number;
}

/**
 * Mathieu mapping of a vertical sine drive: A = -4g/(L w^2), q = 2a/L.
 * @param length equivalent length L (m)
 * @param gravity g (m/s^2)
 * @param omega drive angular frequency w (rad/s)
 * @param amplitude drive amplitude a (m)
 */
export function mathieuMapping(length: number, gravity: number, omega: number, amplitude: number): MathieuPoint {
  return { A: -4 * gravity / (length * omega * omega), q: 2 * amplitude / length };
}

/** Inverse mapping: drive amplitude (m) and angular frequency (rad/s) of a Mathieu point with A < 0. */
export function driveFromMathieu(length: number, gravity: number, point: MathieuPoint): { amplitude: number; omega: number } {
  return { amplitude: point.q * length / 2, omega: Math.sqrt(-4 * gravity / (length * point.A)) };
}

/** The four families of characteristic values. */
export type MathieuFamily = 'a-even' | 'a-odd' | 'b-odd' | 'b-even';

/**
 * Characteristic value a_n(q) (even Mathieu functions ce_n), n >= 0.
 *
 * Method: the Fourier coefficients of ce_n satisfy a three-term recurrence (A&S 20.2.5-20.2.11), i.e. a_n is an
 * eigenvalue of a symmetric tridiagonal (Hill) matrix; it is located by Sturm-sequence bisection to about 1e-14
 * relative. The matrix is truncated at 40 + 2|q| + n terms, far beyond where the coefficients matter.
 */
export function mathieuA(n: number, q: number): number {
  assertOrder(n, 0);
  return n % 2 === 0 ? hillEigenvalue('a-even', n / 2, q) : hillEigenvalue('a-odd', (n - 1) / 2, q);
}

/** Characteristic value b_n(q) (odd Mathieu functions se_n), n >= 1. Method as {@link mathieuA}. */
export function mathieuB(n: number, q: number): number {
  assertOrder(n, 1);
  return n % 2 === 1 ? hillEigenvalue('b-odd', (n - 1) / 2, q) : hillEigenvalue('b-even', n / 2 - 1, q);
}

function assertOrder(n: number, min: number): void {
  if (!Number.isInteger(n) || n < min) throw new RangeError(`order must be an integer >= ${min}, got ${n}`);
}

/**
 * index-th smallest eigenvalue of the Hill matrix of a family.
 * a-even: cos 2rx, diag (2r)^2, first off-diagonal sqrt(2) q; a-odd: cos(2r+1)x, diag (2r+1)^2 with 1 + q first;
 * b-odd: sin(2r+1)x, diag (2r+1)^2 with 1 - q first; b-even: sin(2r+2)x, diag (2r+2)^2. Other off-diagonals q.
 */
function hillEigenvalue(family: MathieuFamily, index: number, q: number): number {
  const size = 40 + index + Math.ceil(2 * Math.abs(q));
  const diag = new Float64Array(size);
  const off = new Float64Array(size);
  for (let r = 0; r < size; r++) {
    const k = family === 'a-even' ? 2 * r : family === 'b-even' ? 2 * r + 2 : 2 * r + 1;
    diag[r] = k * k;
    off[r] = q;
  }
  if (family === 'a-even') off[0] = Math.SQRT2 * q;
  if (family === 'a-odd') diag[0] += q;
  if (family === 'b-odd') diag[0] -= q;
  let lo = Infinity;
  let hi = -Infinity;
  for (let r = 0; r < size; r++) {
    const radius = (r > 0 ? Math.abs(off[r - 1]) : 0) + (r < size - 1 ? Math.abs(off[r]) : 0);
    lo = Math.min(lo, diag[r] - radius);
    hi = Math.max(hi, diag[r] + radius);
  }
  for (let iter = 0; iter < 200 && hi - lo > 1e-15 * Math.max(1, Math.abs(lo), Math.abs(hi)); iter++) {
    const mid = 0.5 * (lo + hi);
    if (countBelow(diag, off, size, mid) > index) hi = mid;
    else lo = mid;
  }
  return 0.5 * (lo + hi);
}

/** Number of eigenvalues of the symmetric tridiagonal matrix below x (Sturm sequence of the LDL^T pivots). */
function countBelow(diag: Float64Array, off: Float64Array, size: number, x: number): number {
  let count = 0;
  let d = diag[0] - x;
  if (d < 0) count++;
  for (let r = 1; r < size; r++) {
    const prev = d === 0 ? 1e-300 : d;
    d = diag[r] - x - off[r - 1] * off[r - 1] / prev;
    if (d < 0) count++;
  }
  return count;
}

/**
 * Monodromy matrix of the Mathieu equation over its period pi, by the fourth-order Magnus method with
 * Richardson extrapolation (steps and 2*steps).
 */
export function mathieuMonodromy(A: number, q: number, steps = 800): Mat2 {
  const coef = (x: number, out: Float64Array): void => {
    out[0] = -(A - 2 * q * cos(2 * x));
    out[1] = 0;
  };
  return richardson4(magnusMonodromy(coef, 0, Math.PI, steps), magnusMonodromy(coef, 0, Math.PI, 2 * steps));
}

/** Floquet discriminant: the trace of the Mathieu monodromy matrix. |trace| < 2 is stable (undamped). */
export function mathieuDiscriminant(A: number, q: number, steps = 800): number {
  const m = mathieuMonodromy(A, q, steps);
  return m[0] + m[3];
}

/**
 * The first `count` stability boundaries in increasing A at fixed q > 0, found from Floquet theory alone:
 * a0 < b1 < a1 < b2 < a2 < ... are the values where the discriminant crosses +2 (a0, b2, a2, ...) or -2
 * (b1, a1, b3, a3, ...). Method: scan A upward from -2q - 1 (below a0, DLMF 28.8) in steps of `scanStep`, then
 * bisect each crossing to 1e-12. Independent of the Hill-matrix values; agreement of the two is a check of both.
 * Boundaries closer together than `scanStep` (q near 0) can be missed.
 */
export function floquetBoundaries(q: number, count: number, scanStep = 0.004): number[] {
  const found: number[] = [];
  const crossing = (A: number): [number, number] => {
    const d = mathieuDiscriminant(A, q, 200);
    return [d - 2, d + 2];
  };
  let A = -2 * Math.abs(q) - 1;
  let prev = crossing(A);
  while (found.length < count) {
    const next = A + scanStep;
    const cur = crossing(next);
    const hits: number[] = [];
    for (const side of [0, 1]) {
      if (Math.sign(prev[side]) !== Math.sign(cur[side])) {
        const target = side === 0 ? 2 : -2;
        hits.push(bisect((x) => mathieuDiscriminant(x, q) - target, A, next, 1e-12));
      }
    }
    hits.sort((x, y) => x - y);
    for (const h of hits) if (found.length < count) found.push(h);
    A = next;
    prev = cur;
  }
  return found;
}

/**
 * q at which b1(q) = 0: the undamped upright is lost at very high drive frequency when 2a/L exceeds it, i.e. at
 * a/L = q/2 (about 0.454; E. I. Butikov, Am. J. Phys. 69, 755 (2001)). Bisection on the Hill value of b1.
 */
export function highFrequencyUpperQ(): number {
  return bisect((q) => mathieuB(1, q), 0.5, 1.5, 1e-13);
}

/** Bisection for a sign change of f on [lo, hi] down to an absolute width tol. */
export function bisect(f: (x: number) => number, lo: number, hi: number, tol: number): number {
  let flo = f(lo);
  for (let i = 0; i < 200 && hi - lo > tol; i++) {
    const mid = 0.5 * (lo + hi);
    const fm = f(mid);
    if (Math.sign(fm) === Math.sign(flo)) {
      lo = mid;
      flo = fm;
    } else {
      hi = mid;
    }
  }
  return 0.5 * (lo + hi);
}
