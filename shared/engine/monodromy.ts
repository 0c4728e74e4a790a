/**
 * Monodromy matrices of linear periodic second-order equations and their Floquet multipliers.
 *
 * The linearised motion about a periodic solution is x'' = p(t) x + c(t) x' with T-periodic p, c; written as the
 * first-order system y' = A(t) y, A = [[0, 1], [p, c]], its fundamental matrix over one period is the monodromy
 * matrix M, whose eigenvalues are the Floquet multipliers (Floquet's theorem; any text on linear ODEs with
 * periodic coefficients, e.g. Yakubovich & Starzhinskii).
 *
 * Method: fourth-order Magnus integrator with two Gauss-Legendre nodes and the exact 2x2 matrix exponential
 * (Iserles & Norsett, Phil. Trans. R. Soc. A 357, 983 (1999)). Unlike explicit Runge-Kutta, each step is an exact
 * exponential of a 2x2 matrix, so strongly oscillating or growing cells stay accurate with few steps; the global
 * error is O(h^4) and one Richardson step (n and 2n steps) lifts it to about O(h^6).
 */
import { portable } from './portable-math';

const { cos, cosh, exp, hypot, sin, sinh } = portable;

/** A 2x2 matrix stored row-major: [m11, m12, m21, m22]. */
export type Mat2 = readonly [number, number, number, number];

/** A complex number. */
export interface Complex {
  readonly re: number;
  readonly im: number;
}

const GAUSS_OFFSET = Math.sqrt(3) / 6;
const COMMUTATOR_WEIGHT = Math.sqrt(3) / 12;

/**
 * Eigenvalues of a 2x2 matrix (the Floquet multipliers when the matrix is a monodromy matrix).
 * Roots of mu^2 - tr mu + det = 0; complex pairs are returned as conjugates, real roots with the larger magnitude
 * first. The smaller real root is taken from det / larger to avoid cancellation.
 */
export function eigenvalues2(m: Mat2): [Complex, Complex] {
  const tr = m[0] + m[3];
  const det = m[0] * m[3] - m[1] * m[2];
  const disc = tr * tr / 4 - det;
  if (disc >= 0) {
    const big = tr / 2 + (tr >= 0 ? 1 : -1) * Math.sqrt(disc);
    const small = big !== 0 ? det / big : 0;
    return [{ re: big, im: 0 }, { re: small, im: 0 }];
  }
  const im = Math.sqrt(-disc);
  return [{ re: tr / 2, im }, { re: tr / 2, im: -im }];
}

/** Largest modulus of the eigenvalues of a 2x2 matrix. */
export function spectralRadius2(m: Mat2): number {
  const [a, b] = eigenvalues2(m);
  return Math.max(hypot(a.re, a.im), hypot(b.re, b.im));
}

/** Modulus of a complex number. */
export function modulus(z: Complex): number {
  return hypot(z.re, z.im);
}

/**
 * Coefficients of the linear equation at time t: writes p(t) into out[0] and c(t) into out[1], where
 * x'' = p x + c x'. Writing into a buffer keeps the inner loop free of allocation.
 */
export type LinearCoefficients = (t: number, out: Float64Array) => void;

/**
 * Monodromy matrix of x'' = p(t) x + c(t) x' over [t0, t0 + period] with `steps` fourth-order Magnus steps.
 * Accuracy: global error O((period/steps)^4) in each entry.
 */
export function magnusMonodromy(coef: LinearCoefficients, t0: number, period: number, steps: number): Mat2 {
  const h = period / steps;
  const buf = new Float64Array(2);
  let m11 = 1, m12 = 0, m21 = 0, m22 = 1;
  for (let k = 0; k < steps; k++) {
    const t = t0 + k * h;
    coef(t + (0.5 - GAUSS_OFFSET) * h, buf);
    const p1 = buf[0], c1 = buf[1];
    coef(t + (0.5 + GAUSS_OFFSET) * h, buf);
    const p2 = buf[0], c2 = buf[1];
    const step = magnusStep(p1, c1, p2, c2, h);
    const n11 = step[0] * m11 + step[1] * m21;
    const n12 = step[0] * m12 + step[1] * m22;
    const n21 = step[2] * m11 + step[3] * m21;
    const n22 = step[2] * m12 + step[3] * m22;
    m11 = n11; m12 = n12; m21 = n21; m22 = n22;
  }
  return [m11, m12, m21, m22];
}

/**
 * Same as {@link magnusMonodromy} from coefficient samples already taken at the two Gauss nodes of each step
 * (p1[k], c1[k] at the first node of step k, p2[k], c2[k] at the second). Used by the stability chart, where the
 * waveform samples are shared by every cell.
 */
export function magnusMonodromySampled(
  p1: ArrayLike<number>, c1: ArrayLike<number>, p2: ArrayLike<number>, c2: ArrayLike<number>,
  h: number, steps: number,
): Mat2 {
  let m11 = 1, m12 = 0, m21 = 0, m22 = 1;
  for (let k = 0; k < steps; k++) {
    const step = magnusStep(p1[k], c1[k], p2[k], c2[k], h);
    const n11 = step[0] * m11 + step[1] * m21;
    const n12 = step[0] * m12 + step[1] * m22;
    const n21 = step[2] * m11 + step[3] * m21;
    const n22 = step[2] * m12 + step[3] * m22;
    m11 = n11; m12 = n12; m21 = n21; m22 = n22;
  }
  return [m11, m12, m21, m22];
}

/** Richardson combination of fourth-order results with n and 2n steps: (16 M_2n - M_n) / 15. */
export function richardson4(coarse: Mat2, fine: Mat2): Mat2 {
  return [
    (16 * fine[0] - coarse[0]) / 15,
    (16 * fine[1] - coarse[1]) / 15,
    (16 * fine[2] - coarse[2]) / 15,
    (16 * fine[3] - coarse[3]) / 15,
  ];
}

const stepOut: [number, number, number, number] = [0, 0, 0, 0];

/**
 * One Magnus step: Omega = h/2 (A1 + A2) + sqrt(3)/12 h^2 [A2, A1], returns exp(Omega) (shared buffer).
 * For A = [[0, 1], [p, c]]: [A2, A1] = A2 A1 - A1 A2 = [[p1 - p2, c1 - c2], [p1 c2 - p2 c1, p2 - p1]].
 */
function magnusStep(p1: number, c1: number, p2: number, c2: number, h: number): Mat2 {
  const w = COMMUTATOR_WEIGHT * h * h;
  const o11 = w * (p1 - p2);
  const o12 = h + w * (c1 - c2);
  const o21 = 0.5 * h * (p1 + p2) + w * (p1 * c2 - p2 * c1);
  const o22 = 0.5 * h * (c1 + c2) + w * (p2 - p1);
  return expm2(o11, o12, o21, o22);
}

/**
 * Exact exponential of a 2x2 matrix: with tau = tr/2 and N = M - tau I, N^2 = delta I where
 * delta = n11^2 + n12 n21, so exp(M) = e^tau (C I + S N) with C = cosh(sqrt delta), S = sinh(sqrt delta)/sqrt delta
 * (cos/sin for delta < 0, Taylor series near 0).
 */
function expm2(m11: number, m12: number, m21: number, m22: number): Mat2 {
  const tau = 0.5 * (m11 + m22);
  const n11 = m11 - tau;
  const delta = n11 * n11 + m12 * m21;
  let c: number;
  let s: number;
  if (Math.abs(delta) < 1e-8) {
    c = 1 + delta / 2 + delta * delta / 24;
    s = 1 + delta / 6 + delta * delta / 120;
  } else if (delta > 0) {
    const r = Math.sqrt(delta);
    c = cosh(r);
    s = sinh(r) / r;
  } else {
    const r = Math.sqrt(-delta);
    c = cos(r);
    s = sin(r) / r;
  }
  const e = exp(tau);
  stepOut[0] = e * (c + s * n11);
  stepOut[1] = e * s * m12;
  stepOut[2] = e * s * m21;
  stepOut[3] = e * (c - s * n11);
  return stepOut;
}
