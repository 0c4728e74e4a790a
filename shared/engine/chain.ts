/**
 * Chains of N rigid links hinged end to end on one pivot that moves along a line: the nonlinear equations of
 * motion, the energy, the pivot force, and the Floquet multipliers of the upright.
 *
 * Method (Lagrangian in absolute link angles theta_i from the upright, clockwise positive; derivation in
 * docs/physics.md, "Chains"): with link i of mass m_i, centre of mass at c_i from its inner (pivot-side) hinge,
 * inertia I_i about that hinge, hinge-to-hinge length l_i and S_i = sum_{k>i} m_k,
 *   M(theta) theta'' = Q(theta, t) - C(theta) theta'^2 - B theta'
 *   M_ij = a_ij cos(theta_i - theta_j),  a_ii = I_i + l_i^2 S_i,  a_ij = l_i mu_j (i < j, symmetric),
 *   mu_i = m_i c_i + l_i S_i,  Q_i = mu_i [g sin theta_i + s''(t) sin(theta_i - beta)],
 *   (C theta'^2)_i = sum_j a_ij sin(theta_i - theta_j) theta_j'^2,
 *   B from the Rayleigh function 1/2 sum_i b_i (theta_i' - theta_{i-1}')^2 (theta_0' = 0, joint i on the pivot side of link i).
 * For N = 1 this is I theta'' = m d [g sin theta + s'' sin(theta - beta)], today's single body.
 */
import { EigenvalueDecomposition, Matrix } from 'ml-matrix';
import type { CaseParams } from '../case/case-schema';
import { chainLinkProperties, type ChainLinkProperties } from './body';
import { driveKinematics, type DriveKinematics } from './drive';
import { integrate, type Derivative } from './integrate';
import type { Complex } from './monodromy';
import { portable } from './portable-math';

const { cos, hypot, sin } = portable;

/** Everything the chain's equations need, precomputed. */
export interface ChainModel {
  /** number of links */
  n: number;
  links: readonly ChainLinkProperties[];
  /** m/s^2 */
  g: number;
  sinBeta: number;
  cosBeta: number;
  /** kg m: mu_i = m_i c_i + l_i S_i, the first moment of link i and everything beyond it about hinge i */
  mu: Float64Array;
  /** kg m^2: a_ij, row-major n x n (M_ij = a_ij cos(theta_i - theta_j)) */
  a: Float64Array;
  /** kg */
  totalMass: number;
  drive: DriveKinematics;
}

/** The chain model from link properties, gravity and drive (beta: drive line from the vertical). */
export function chainModel(links: readonly ChainLinkProperties[], g: number, drive: DriveKinematics, beta = 0): ChainModel {
  const n = links.length;
  const beyond = new Float64Array(n + 1);
  for (let i = n - 1; i >= 0; i--) beyond[i] = beyond[i + 1] + links[i].mass;
  const mu = new Float64Array(n);
  for (let i = 0; i < n; i++) mu[i] = links[i].mass * links[i].comDistance + links[i].length * beyond[i + 1];
  const a = new Float64Array(n * n);
  for (let i = 0; i < n; i++) {
    a[i * n + i] = links[i].inertia + links[i].length * links[i].length * beyond[i + 1];
    for (let j = i + 1; j < n; j++) {
      a[i * n + j] = links[i].length * mu[j];
      a[j * n + i] = a[i * n + j];
    }
  }
  return { n, links, g, sinBeta: sin(beta), cosBeta: cos(beta), mu, a, totalMass: beyond[0], drive };
}

/** The chain model of a validated chain case; throws for another body kind (a programming error). */
export function buildChainModel(params: CaseParams): ChainModel {
  if (params.body.kind !== 'chain') throw new Error('not a chain case');
  return chainModel(params.body.links.map(chainLinkProperties), params.gravity, driveKinematics(params.drive), params.drive.direction);
}

/** Start state [theta_1..theta_N, rate_1..rate_N]: start.angle/rate plus each link's bend relative to the previous link. */
export function chainStart(params: CaseParams): number[] {
  if (params.body.kind !== 'chain') throw new Error('not a chain case');
  const links = params.body.links;
  const y = new Array<number>(2 * links.length);
  let angle = params.start.angle;
  let rate = params.start.rate;
  links.forEach((link, i) => {
    angle += link.startBend ?? 0;
    rate += link.startBendRate ?? 0;
    y[i] = angle;
    y[links.length + i] = rate;
  });
  return y;
}

/**
 * Angular accelerations theta'' of every link at (t, y), y = [theta, rate], written into `out`. `work` is scratch
 * space of at least n (n + 3) numbers; passing it keeps the inner loop free of allocation.
 */
export function chainAccelerations(model: ChainModel, t: number, y: ArrayLike<number>, out: Float64Array, work = new Float64Array(model.n * (model.n + 3))): void {
  const { n, a, mu, g, sinBeta, cosBeta, links } = model;
  const sa = model.drive.acceleration(t);
  const s = work.subarray(0, n);
  const c = work.subarray(n, 2 * n);
  const r = work.subarray(2 * n, 3 * n);
  const m = work.subarray(3 * n, 3 * n + n * n);
  for (let i = 0; i < n; i++) {
    s[i] = sin(y[i]);
    c[i] = cos(y[i]);
  }
  for (let i = 0; i < n; i++) {
    let ri = mu[i] * (g * s[i] + sa * (s[i] * cosBeta - c[i] * sinBeta));
    for (let j = 0; j < n; j++) {
      const aij = a[i * n + j];
      m[i * n + j] = i === j ? aij : aij * (c[i] * c[j] + s[i] * s[j]);
      if (i !== j) {
        const w = y[n + j];
        ri -= aij * (s[i] * c[j] - c[i] * s[j]) * w * w;
      }
    }
    const inner = i > 0 ? y[n + i - 1] : 0;
    ri -= links[i].jointDamping * (y[n + i] - inner);
    if (i + 1 < n) ri += links[i + 1].jointDamping * (y[n + i + 1] - y[n + i]);
    r[i] = ri;
  }
  solveSymmetricPositive(m, r, n, out);
}

/**
 * Solves M x = r for a symmetric positive definite M (n x n, row-major; overwritten) by Gaussian elimination
 * without pivoting, which is stable for such matrices (Golub & Van Loan, Matrix Computations, section 4.2).
 */
function solveSymmetricPositive(m: Float64Array, r: Float64Array, n: number, x: Float64Array): void {
  for (let k = 0; k < n; k++) {
    const pivot = m[k * n + k];
    for (let i = k + 1; i < n; i++) {
      const f = m[i * n + k] / pivot;
      if (f === 0) continue;
      for (let j = k; j < n; j++) m[i * n + j] -= f * m[k * n + j];
      r[i] -= f * r[k];
    }
  }
  for (let i = n - 1; i >= 0; i--) {
    let v = r[i];
    for (let j = i + 1; j < n; j++) v -= m[i * n + j] * x[j];
    x[i] = v / m[i * n + i];
  }
}

/** The chain's first-order system y = [theta_1..theta_N, rate_1..rate_N] for `integrate`. */
export function chainDerivative(model: ChainModel): Derivative {
  const n = model.n;
  const acc = new Float64Array(n);
  const work = new Float64Array(n * (n + 3));
  return (t, y) => {
    chainAccelerations(model, t, y, acc, work);
    const dy = new Array<number>(2 * n);
    for (let i = 0; i < n; i++) {
      dy[i] = y[n + i];
      dy[n + i] = acc[i];
    }
    return dy;
  };
}

/** J: energy in the pivot's frame, 1/2 rate^T M rate + g sum mu_i (1 + cos theta_i) (zero hanging at rest). */
export function chainEnergy(model: ChainModel, y: ArrayLike<number>): number {
  const { n, a, mu, g } = model;
  let kinetic = 0;
  let potential = 0;
  for (let i = 0; i < n; i++) {
    potential += g * mu[i] * (1 + cos(y[i]));
    for (let j = 0; j < n; j++) kinetic += a[i * n + j] * cos(y[i] - y[j]) * y[n + i] * y[n + j];
  }
  return 0.5 * kinetic + potential;
}

/**
 * N: magnitude of the force the pivot exerts on the chain, R = sum m_i a_i + M g (up)
 * = M (a_pivot + g) + sum_j mu_j e_j'' with e_j = (sin theta_j, cos theta_j) (x right, y up).
 */
export function chainPivotForce(model: ChainModel, t: number, y: ArrayLike<number>, acc?: Float64Array): number {
  const n = model.n;
  const alpha = acc ?? new Float64Array(n);
  if (!acc) chainAccelerations(model, t, y, alpha);
  const sa = model.drive.acceleration(t);
  let rx = model.totalMass * sa * model.sinBeta;
  let ry = model.totalMass * (sa * model.cosBeta + model.g);
  for (let j = 0; j < n; j++) {
    const st = sin(y[j]);
    const ct = cos(y[j]);
    const w2 = y[n + j] * y[n + j];
    rx += model.mu[j] * (alpha[j] * ct - w2 * st);
    ry += model.mu[j] * (-alpha[j] * st - w2 * ct);
  }
  return hypot(rx, ry);
}

/**
 * The linearisation about the upright under a vertical drive: theta'' = (g + s''(t)) K theta - D theta' with
 * K = M0^-1 diag(mu) and D = M0^-1 B, M0 = M(0) (row-major n x n each).
 */
export function chainUprightLinearisation(model: ChainModel): { K: Float64Array; D: Float64Array } {
  const { n, a, mu, links } = model;
  const K = new Float64Array(n * n);
  const D = new Float64Array(n * n);
  const col = new Float64Array(n);
  const x = new Float64Array(n);
  for (let j = 0; j < n; j++) {
    // column j of diag(mu) and of the joint damping matrix B (tridiagonal)
    col.fill(0);
    col[j] = mu[j];
    solveSymmetricPositive(a.slice(), col, n, x);
    for (let i = 0; i < n; i++) K[i * n + j] = x[i];
    col.fill(0);
    col[j] = links[j].jointDamping + (j + 1 < n ? links[j + 1].jointDamping : 0);
    if (j > 0) col[j - 1] = -links[j].jointDamping;
    if (j + 1 < n) col[j + 1] = -links[j + 1].jointDamping;
    solveSymmetricPositive(a.slice(), col, n, x);
    for (let i = 0; i < n; i++) D[i * n + j] = x[i];
  }
  return { K, D };
}

/** Integrator tolerances of the variational equations: near round-off, so the multipliers carry ~12 digits. */
const MONODROMY_RTOL = 1e-13;
const MONODROMY_ATOL = 1e-15;

/**
 * Monodromy matrix (2n x 2n, rows as arrays) of the linearisation about the upright over one drive period from t0:
 * the fundamental matrix of y' = A(t) y, A = [[0, I], [(g + s'') K, -D]], integrated column by column together by
 * the engine's integrator (odex) from the identity at tolerances near round-off.
 */
export function chainUprightMonodromy(model: ChainModel, t0: number, period: number): number[][] {
  const n = model.n;
  const dim = 2 * n;
  const { K, D } = chainUprightLinearisation(model);
  const g = model.g;
  const acceleration = model.drive.acceleration;
  const f: Derivative = (t, y) => {
    const p = g + acceleration(t) * model.cosBeta;
    const dy = new Array<number>(dim * dim);
    for (let col = 0; col < dim; col++) {
      const o = col * dim;
      for (let i = 0; i < n; i++) {
        dy[o + i] = y[o + n + i];
        let v = 0;
        for (let j = 0; j < n; j++) v += p * K[i * n + j] * y[o + j] - D[i * n + j] * y[o + n + j];
        dy[o + n + i] = v;
      }
    }
    return dy;
  };
  const y0 = new Array<number>(dim * dim).fill(0);
  for (let i = 0; i < dim; i++) y0[i * dim + i] = 1;
  const result = integrate(f, t0, y0, t0 + period, {
    rtol: MONODROMY_RTOL, atol: MONODROMY_ATOL, maxStep: period / 2, initialStep: period / 50, maxSteps: 1e6,
  });
  const rows: number[][] = [];
  for (let i = 0; i < dim; i++) {
    const row = new Array<number>(dim);
    for (let col = 0; col < dim; col++) row[col] = result.status === 'completed' ? result.y[col * dim + i] : Number.NaN;
    rows.push(row);
  }
  return rows;
}

/**
 * Eigenvalues of a real square matrix (the Floquet multipliers of a monodromy matrix), largest modulus first, by
 * ml-matrix's EigenvalueDecomposition (Hessenberg reduction and shifted QR, the JAMA/EISPACK hqr2 algorithm); it
 * uses only arithmetic, sqrt and abs, so it gives the same bits in every runtime. NaN entries give NaN multipliers.
 */
export function eigenvalues(rows: number[][]): Complex[] {
  if (rows.some((r) => r.some((v) => !Number.isFinite(v)))) return rows.map(() => ({ re: Number.NaN, im: Number.NaN }));
  const evd = new EigenvalueDecomposition(new Matrix(rows));
  const re = evd.realEigenvalues;
  const im = evd.imaginaryEigenvalues;
  return re
    .map((x, i) => ({ re: x, im: im[i] }))
    .sort((p, q) => hypot(q.re, q.im) - hypot(p.re, p.im) || q.im - p.im);
}

/** A Floquet mode of the chain's upright: its multiplier and the shape of the link angles in it. */
export interface FloquetMode {
  multiplier: Complex;
  modulus: number;
  /**
   * Each link's angle amplitude in the mode, relative to the largest (1), signed: negative swings against the
   * largest (for a complex pair, the component in phase with the largest after rotating it to real).
   */
  shape: number[];
}

/**
 * The modes of a monodromy matrix (2n x 2n, state [theta, rate]), one per real multiplier and per complex pair
 * (the member with positive imaginary part), largest modulus first: the first is the one that loses stability first.
 * Eigenvectors by ml-matrix (for a complex pair its columns hold the real and imaginary parts).
 */
export function floquetModes(rows: number[][], n: number): FloquetMode[] {
  if (rows.some((r) => r.some((v) => !Number.isFinite(v)))) return [];
  const evd = new EigenvalueDecomposition(new Matrix(rows));
  const re = evd.realEigenvalues;
  const im = evd.imaginaryEigenvalues;
  const vectors = evd.eigenvectorMatrix;
  const modes: FloquetMode[] = [];
  for (let j = 0; j < re.length; j++) {
    if (im[j] < 0) continue;
    const vr: number[] = [];
    const vi: number[] = [];
    for (let k = 0; k < n; k++) {
      vr.push(vectors.get(k, j));
      vi.push(im[j] > 0 ? vectors.get(k, j + 1) : 0);
    }
    let big = 0;
    for (let k = 1; k < n; k++) if (hypot(vr[k], vi[k]) > hypot(vr[big], vi[big])) big = k;
    const size = hypot(vr[big], vi[big]);
    // rotate so the largest component is real and positive: v conj(v_big) / |v_big|^2
    const shape = vr.map((x, k) => (size > 0 ? (x * vr[big] + vi[k] * vi[big]) / (size * size) : 0));
    modes.push({ multiplier: { re: re[j], im: im[j] }, modulus: hypot(re[j], im[j]), shape });
  }
  return modes.sort((a, b) => b.modulus - a.modulus);
}
