/**
 * Exact (Floquet) stability of the upright and of the other periodic motions of a case, and the drive limits of
 * the upright.
 *
 * Method: the period map over T = 2 pi / w; its fixed points are the periodic motions, found by Newton's method with
 * the monodromy matrix from the variational equations (period-map.ts); the Floquet multipliers are the eigenvalues
 * of that 2x2 matrix, and a periodic motion is stable when every multiplier lies inside the unit circle. With a
 * vertical drive the upright is an exact equilibrium and its linearisation (the damped Mathieu equation; Abramowitz
 * & Stegun ch. 20) is integrated with the fourth-order Magnus method plus one Richardson step (monodromy.ts). The
 * lower and upper drive limits are where the largest |multiplier| of the upright crosses 1, bracketed on a
 * logarithmic scan and refined by bisection.
 *
 * A drive ramp is ignored here: the analysis is of the steady drive at drive.frequency.
 */
import type { CaseParams } from '../case/case-schema';
import { getField, setField } from '../case/case-fields';
import { CASE_LIMITS } from '../case/case-schema';
import { bodyProperties } from './body';
import { buildChainModel, chainUprightMonodromy, eigenvalues, floquetModes, type FloquetMode } from './chain';
import { ENGINE_VERSION } from './version';
import { mathieuA, mathieuB, mathieuMapping } from './mathieu';
import {
  Complex, Mat2, eigenvalues2, magnusMonodromy, modulus, richardson4, spectralRadius2,
} from './monodromy';
import { findPeriodicMotion, PeriodicSystem } from './period-map';
import { periodicSystem, steadyDrive } from './periodic-system';
import { portable } from './portable-math';

const { pow, sin } = portable;

/** How a periodic motion sits: near the upright, hanging down, or tilted between. */
export type PeriodicMotionKind = 'upright' | 'tilted' | 'hanging';

/** A periodic motion (fixed point of the period map) with its Floquet multipliers. */
export interface PeriodicMotion {
  kind: PeriodicMotionKind;
  /** rad: angle at the section (start of the period), wrapped to (-pi, pi]. */
  angle: number;
  /** rad/s: rate at the section. */
  rate: number;
  /** rad: mean angle over one period, wrapped to (-pi, pi]. */
  meanAngle: number;
  /** All multipliers, largest modulus first: 2 for a single body, 2N for a chain of N links. */
  multipliers: Complex[];
  /** Largest |multiplier|. */
  maxMultiplier: number;
  stable: boolean;
  /** Chains: the upright's modes, largest |multiplier| first (the one that loses stability first). */
  modes?: FloquetMode[];
}

/** Drive limits of the upright along one drive parameter, the others fixed. */
export interface DriveLimits {
  /** Case field varied: 'drive.amplitude' (m) or 'drive.frequency' (Hz). */
  field: 'drive.amplitude' | 'drive.frequency';
  unit: 'm' | 'Hz';
  /** The case's value of the field. */
  value: number;
  /** Below this the upright is lost (null: none found in the scanned range). */
  lower: number | null;
  /** Above this the upright is lost again (null: stable to the end of the scanned range). */
  upper: number | null;
  /** Relative bisection tolerance the limits were located to. */
  relTolerance: number;
  /** Scanned range [from, to]. */
  scanned: [number, number];
  /**
   * Signed smallest relative change of the field that reaches a limit, in percent: 100 min(v/lower - 1, 1 - v/upper).
   * Positive inside the holding band, negative outside; null when no limit was found.
   */
  marginPercent: number | null;
  /** Where the case sits in the band, 0 % at the lower limit, 100 % at the upper (linear); null if a limit is missing. */
  positionPercent: number | null;
}

export interface FloquetAnalysis {
  engineVersion: string;
  /** Drive period T (s). */
  period: number;
  /** true when the upright is an exact equilibrium (vertical drive line). */
  uprightIsEquilibrium: boolean;
  /** The upright (or the periodic motion near it); null when Newton finds none near the upright. */
  upright: PeriodicMotion | null;
  /** Verdict of the upright: holds when its largest |multiplier| is below 1 (or within 1e-7 of 1, undamped). */
  uprightHolds: boolean;
  /** Every distinct periodic motion found from a ring of starts (upright, tilted, hanging). */
  periodicMotions: PeriodicMotion[];
  amplitudeLimits: DriveLimits;
  frequencyLimits: DriveLimits;
  /** The smaller of the two margins (percent), null when neither exists. */
  marginPercent: number | null;
  /** Mathieu parameters of the case and the undamped band a0(q) < A < b1(q) (vertical sine drive only). */
  mathieu: { A: number; q: number; a0: number; b1: number } | null;
}

/** Options of {@link floquetAnalysis}. */
export interface FloquetOptions {
  /** Relative tolerance of the limit bisection (default 1e-6). */
  relTolerance?: number;
  /** Starting angles for the periodic-motion search (default 24). */
  starts?: number;
}

/** Multiplier moduli within this of 1 count as on the unit circle (undamped, neutrally stable). */
export const MULTIPLIER_UNIT_TOLERANCE = 1e-7;

/**
 * Floquet analysis of a case: the upright's multipliers and verdict, the other periodic motions, and the lower and
 * upper drive limits of the upright in amplitude (frequency fixed) and in frequency (amplitude fixed).
 */
export function floquetAnalysis(params: CaseParams, options: FloquetOptions = {}): FloquetAnalysis {
  const steady = steadyDrive(params);
  const relTolerance = options.relTolerance ?? 1e-6;
  const sys = periodicSystem(steady);
  const vertical = isVertical(steady);
  const upright = uprightMotion(steady);
  // A chain's other periodic motions are not searched (a 2N-dimensional Newton from a ring of starts); its upright is.
  const periodicMotions = steady.body.kind === 'chain' ? (upright ? [upright] : []) : searchPeriodicMotions(sys, options.starts ?? 24, upright);
  const amplitudeLimits = driveLimits(steady, 'drive.amplitude', relTolerance);
  const frequencyLimits = driveLimits(steady, 'drive.frequency', relTolerance);
  const margins = [amplitudeLimits.marginPercent, frequencyLimits.marginPercent].filter((m): m is number => m !== null);
  let mathieu: FloquetAnalysis['mathieu'] = null;
  if (vertical && steady.drive.waveform.kind === 'sine' && steady.body.kind !== 'chain') {
    const L = bodyProperties(steady.body, steady.gravity).equivalentLength;
    const p = mathieuMapping(L, steady.gravity, 2 * Math.PI * steady.drive.frequency, steady.drive.amplitude);
    mathieu = { ...p, a0: mathieuA(0, p.q), b1: mathieuB(1, p.q) };
  }
  return {
    engineVersion: ENGINE_VERSION,
    period: sys.period,
    uprightIsEquilibrium: vertical,
    upright,
    uprightHolds: upright !== null && upright.stable,
    periodicMotions,
    amplitudeLimits,
    frequencyLimits,
    marginPercent: margins.length ? Math.min(...margins) : null,
    mathieu,
  };
}

function isVertical(params: CaseParams): boolean {
  return Math.abs(sin(params.drive.direction)) < 1e-12;
}

/**
 * The upright's periodic motion and multipliers. Vertical drive: the exact equilibrium theta = 0 with the linear
 * monodromy (Magnus + Richardson). Otherwise the fixed point of the period map nearest the upright, by Newton from
 * `start` (default rest at theta = 0; when a start other than rest fails, rest is tried too). A motion whose mean
 * angle is more than 0.5 rad from the upright does not count.
 */
export function uprightMotion(params: CaseParams, start?: readonly [number, number]): PeriodicMotion | null {
  const steady = steadyDrive(params);
  if (steady.body.kind === 'chain') return chainUpright(steady);
  const sys = periodicSystem(steady);
  if (isVertical(steady)) {
    const m = uprightMonodromy(sys);
    return describe(0, 0, 0, m, 'upright');
  }
  let fp = start ? findPeriodicMotion(sys, start[0], start[1]) : null;
  if (!fp || Math.abs(wrapAngle(fp.meanAngle)) > 0.5) fp = findPeriodicMotion(sys, 0, 0);
  if (!fp || Math.abs(wrapAngle(fp.meanAngle)) > 0.5) return null;
  return describe(fp.theta, fp.rate, fp.meanAngle, fp.monodromy, 'upright');
}

/**
 * The upright of a chain (an exact equilibrium: chains are driven vertically) with all 2N multipliers of its
 * monodromy matrix (chain.ts), over one drive period from the strobe phase.
 */
function chainUpright(params: CaseParams): PeriodicMotion {
  const model = buildChainModel(params);
  const period = model.drive.period;
  const rows = chainUprightMonodromy(model, params.run.strobePhase / model.drive.omega, period);
  const multipliers = eigenvalues(rows);
  const maxMultiplier = Math.max(...multipliers.map(modulus));
  return {
    kind: 'upright',
    angle: 0,
    rate: 0,
    meanAngle: 0,
    multipliers,
    maxMultiplier: Number.isNaN(maxMultiplier) ? Infinity : maxMultiplier,
    stable: maxMultiplier < 1 + MULTIPLIER_UNIT_TOLERANCE,
    modes: floquetModes(rows, model.n),
  };
}

/**
 * Largest |multiplier| of the upright (Infinity when no periodic motion exists near it). The function whose
 * crossing of 1 defines the drive limits.
 */
export function uprightMaxMultiplier(params: CaseParams): number {
  const u = uprightMotion(params);
  return u ? u.maxMultiplier : Infinity;
}

/**
 * Linear monodromy about theta = 0 with steps chosen from the stiffness scale: h sqrt(max|p| + c^2) <= 1/8 over the
 * period and at least 24 steps per period of the highest drive harmonic; Richardson with n and 2n steps.
 */
export function uprightMonodromy(sys: PeriodicSystem, minSteps = 96): Mat2 {
  const jac = new Float64Array(2);
  const coef = (t: number, out: Float64Array): void => {
    sys.jacobian(t, 0, 0, jac);
    out[0] = jac[0];
    out[1] = jac[1];
  };
  const steps = stepsForPeriod(sys, minSteps);
  return richardson4(
    magnusMonodromy(coef, sys.t0, sys.period, steps),
    magnusMonodromy(coef, sys.t0, sys.period, 2 * steps),
  );
}

/** Magnus steps per period for the linearisation about theta = 0 (see {@link uprightMonodromy}). */
export function stepsForPeriod(sys: PeriodicSystem, minSteps: number): number {
  const jac = new Float64Array(2);
  let scale = 0;
  const samples = 64;
  for (let i = 0; i < samples; i++) {
    sys.jacobian(sys.t0 + (i / samples) * sys.period, 0, 0, jac);
    scale = Math.max(scale, Math.sqrt(Math.abs(jac[0]) + jac[1] * jac[1]));
  }
  return Math.min(20000, Math.max(minSteps, Math.ceil(8 * scale * sys.period)));
}

function describe(theta: number, rate: number, meanAngle: number, m: Mat2, kind: PeriodicMotionKind): PeriodicMotion {
  const multipliers = eigenvalues2(m);
  const maxMultiplier = spectralRadius2(m);
  return {
    kind,
    angle: wrapAngle(theta),
    rate,
    meanAngle: wrapAngle(meanAngle),
    multipliers,
    maxMultiplier,
    stable: maxMultiplier < 1 + MULTIPLIER_UNIT_TOLERANCE,
  };
}

/** Angle wrapped to (-pi, pi]. */
export function wrapAngle(x: number): number {
  const y = x - 2 * Math.PI * Math.round(x / (2 * Math.PI));
  return y <= -Math.PI ? y + 2 * Math.PI : y;
}

/**
 * Distinct periodic motions from Newton started at rest from `starts` angles evenly around the circle. Motions are
 * the same when their section states agree to 1e-6 (angles modulo 2 pi). Kind from the mean angle: within 0.3 rad
 * of the upright or of hanging down, otherwise tilted.
 */
function searchPeriodicMotions(sys: PeriodicSystem, starts: number, upright: PeriodicMotion | null): PeriodicMotion[] {
  const found: PeriodicMotion[] = upright ? [upright] : [];
  const omega = 2 * Math.PI / sys.period;
  for (let i = 0; i < starts; i++) {
    const theta0 = -Math.PI + (2 * Math.PI * (i + 0.5)) / starts;
    const fp = findPeriodicMotion(sys, theta0, 0);
    if (!fp) continue;
    const same = found.some(
      (m) => Math.abs(wrapAngle(m.angle - fp.theta)) < 1e-6 && Math.abs(m.rate - fp.rate) < 1e-6 * omega,
    );
    if (same) continue;
    const mean = wrapAngle(fp.meanAngle);
    const kind: PeriodicMotionKind =
      Math.abs(mean) < 0.3 ? 'upright' : Math.PI - Math.abs(mean) < 0.3 ? 'hanging' : 'tilted';
    if (kind === 'upright' && upright) continue;
    found.push(describe(fp.theta, fp.rate, fp.meanAngle, fp.monodromy, kind));
  }
  return found.sort((a, b) => a.meanAngle - b.meanAngle);
}

/**
 * Lower and upper limits of the upright along one drive field (amplitude in m, or frequency in Hz).
 *
 * Method: the largest |multiplier| minus 1 is sampled on a logarithmic grid of 160 points; the holding band is the
 * run of holding samples containing the case (or, when the case does not hold, the first band above it, else the
 * last below it); each end is refined by bisection on max|multiplier| = 1 (with damping the crossing is clean;
 * undamped, moduli within 1e-7 of 1 count as holding) to the relative tolerance. Bands narrower than the grid
 * spacing can be missed. Scan ranges: amplitude from 1e-4 L to the smaller of 2 L, the amplitude limit of the
 * schema and the connecting rod; frequency from a tenth of the smaller, to ten times the larger, of the case
 * frequency and the averaged-theory lower limit sqrt(2gL)/(2 pi a), capped by the schema.
 */
export function driveLimits(
  params: CaseParams, field: 'drive.amplitude' | 'drive.frequency', relTolerance = 1e-6,
): DriveLimits {
  const steady = steadyDrive(params);
  const value = getField(steady, field);
  const L = bodyProperties(steady.body, steady.gravity).equivalentLength;
  let from: number;
  let to: number;
  if (field === 'drive.amplitude') {
    from = 1e-4 * L;
    to = Math.min(2 * L, CASE_LIMITS.maxAmplitude);
    if (steady.drive.waveform.kind === 'crank-slider') to = Math.min(to, 0.999 * steady.drive.waveform.connectingRod);
  } else {
    const a = Math.max(steady.drive.amplitude, 1e-12);
    const estimate = Math.sqrt(2 * steady.gravity * L) / (2 * Math.PI * a);
    from = Math.min(value, estimate) / 10;
    to = Math.min(Math.max(value, estimate) * 10, CASE_LIMITS.maxFrequency);
  }
  const unit = field === 'drive.amplitude' ? 'm' : 'Hz';
  const holds = (x: number): boolean => uprightMaxMultiplier(setField(steady, field, x)) < 1 + MULTIPLIER_UNIT_TOLERANCE;
  const n = 160;
  const grid: number[] = [];
  for (let i = 0; i < n; i++) grid.push(from * pow(to / from, i / (n - 1)));
  const ok = grid.map(holds);
  // Index of the first grid point above the case value.
  let at = grid.findIndex((x) => x > value);
  if (at < 0) at = n;
  const caseHolds = holds(value);
  let lo: number;
  let hi: number;
  if (caseHolds) {
    lo = at - 1;
    while (lo >= 0 && ok[lo]) lo--;
    hi = at;
    while (hi < n && ok[hi]) hi++;
  } else {
    let first = ok.findIndex((h, i) => h && i >= at);
    if (first < 0) {
      first = -1;
      for (let i = Math.min(at - 1, n - 1); i >= 0; i--) if (ok[i]) { first = i; break; }
    }
    if (first < 0) {
      return { field, unit, value, lower: null, upper: null, relTolerance, scanned: [from, to], marginPercent: null, positionPercent: null };
    }
    lo = first - 1;
    while (lo >= 0 && ok[lo]) lo--;
    hi = first + 1;
    while (hi < n && ok[hi]) hi++;
  }
  // lo: last failing index below the band (or -1), hi: first failing index above (or n).
  const refine = (failing: number, holding: number): number => {
    let f = failing;
    let h = holding;
    for (let i = 0; i < 200 && Math.abs(f - h) > relTolerance * Math.abs(h); i++) {
      const mid = Math.sqrt(f * h);
      if (holds(mid)) h = mid;
      else f = mid;
    }
    return Math.sqrt(f * h);
  };
  const lower = lo >= 0 ? refine(grid[lo], caseHolds ? Math.min(value, grid[lo + 1]) : grid[lo + 1]) : null;
  const upper = hi < n ? refine(grid[hi], caseHolds ? Math.max(value, grid[hi - 1]) : grid[hi - 1]) : null;
  const parts: number[] = [];
  if (lower !== null) parts.push(value / lower - 1);
  if (upper !== null) parts.push(1 - value / upper);
  const marginPercent = parts.length ? 100 * Math.min(...parts) : null;
  const positionPercent = lower !== null && upper !== null ? (100 * (value - lower)) / (upper - lower) : null;
  return { field, unit, value, lower, upper, relTolerance, scanned: [from, to], marginPercent, positionPercent };
}
