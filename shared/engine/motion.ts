import type { CaseParams } from '../case/case-schema';
import { caseDigest } from '../case/canonical';
import { assertCase } from '../case/validate';
import { classifyMotion, type MotionOutcome, type OutcomeNumbers } from './classify';
import { simulateChainMotion } from './chain-motion';
import { buildModel, rhsAt, type RigModel } from './equations';
import { integrate, rigDerivative, type IntegrateStatus } from './integrate';
import { noiseMaxStep, noisyDrive } from './drive-noise';
import { ENGINE_VERSION } from './version';
import { portable } from './portable-math';

const { cos, hypot, sin } = portable;

/** Thrown by engine functions when their cancellation check returns true. */
export class EngineCancelledError extends Error {
  constructor() {
    super('computation cancelled');
    this.name = 'EngineCancelledError';
  }
}

export interface MotionHooks {
  /** Fraction of simulated time done, 0..1; called at most about 100 times. */
  onProgress?: (fraction: number) => void;
  /** Polled every few dozen steps; true stops the run with EngineCancelledError. */
  shouldCancel?: () => boolean;
}

export interface MotionSeries {
  /** s, uniform grid over the run, at most run.outputPoints long */
  t: Float64Array;
  /** rad from the upright, continuous (not wrapped) */
  theta: Float64Array;
  /** rad/s */
  rate: Float64Array;
  /** m: pivot displacement s(t) along the drive line */
  pivotPosition: Float64Array;
  /** J: energy in the pivot's frame, 1/2 I rate^2 + m g d (1 + cos theta) (zero hanging at rest) */
  energy: Float64Array;
  /** N: magnitude of the force the pivot exerts on the body */
  pivotForce: Float64Array;
}

export interface SampledMotion {
  t: Float64Array;
  theta: Float64Array;
  rate: Float64Array;
}

export interface MotionSummary {
  /** m */
  equivalentLength: number;
  /** rad/s */
  naturalFrequency: number;
  /** rad/s */
  driveOmega: number;
  /** drive periods covered */
  drivePeriods: number;
  /** m/s^2: largest |s''| of the drive (steady state) */
  peakPivotAcceleration: number;
  /** in g */
  peakPivotAccelerationG: number;
  /** N: largest pivot force magnitude seen at the sampled points (16 per drive period and the output grid) */
  peakPivotForce: number;
  /** s: time reached */
  endTime: number;
  /** rad, rad/s at endTime */
  finalTheta: number;
  finalRate: number;
  /** take every k-th drive period into strobe/slow arrays (1 unless the run has more periods than outputPoints) */
  periodStride: number;
  rhsPerDrivePeriod: number;
  acceptedSteps: number;
  rejectedSteps: number;
}

/** Every link of a chain (absent for a single body); index 0 is the link on the pivot. */
export interface ChainMotion {
  links: number;
  /** rad from the upright, absolute (not relative to the previous link), continuous; on the series' time grid */
  theta: Float64Array[];
  /** rad/s */
  rate: Float64Array[];
  /** on the strobe's time grid */
  strobeTheta: Float64Array[];
  /** rad/s, absolute, on the strobe's time grid */
  strobeRate: Float64Array[];
  /** on the slow motion's time grid */
  slowTheta: Float64Array[];
  /** each link's outcome; the chain's is the worst */
  outcomes: MotionOutcome[];
  /** 1-based link whose outcome is the chain's */
  decidingLink: number;
}

export interface MotionResult {
  engineVersion: string;
  caseDigest: string;
  status: IntegrateStatus;
  series: MotionSeries;
  /** stroboscopic section: state at drive phase run.strobePhase, once per (stride) drive period */
  strobe: SampledMotion;
  /** slow motion: theta and rate averaged over each drive period (16 samples in phase), stamped at its middle */
  slow: SampledMotion;
  summary: MotionSummary;
  outcome: MotionOutcome;
  outcomeNumbers: OutcomeNumbers;
  rhsEvaluations: number;
  /** chains only: every link */
  chain?: ChainMotion;
}

/** Phase samples per drive period for the slow average and the force peak. */
const PHASE_SAMPLES = 16;

/** Pivot reaction force on the body, N: R = m a_com + m g (up), with a_com from the pivot motion and the swing. */
function pivotForce(model: RigModel, t: number, theta: number, rate: number): number {
  const { mass, comDistance: d } = model.body;
  // one evaluation of s'', sin and cos shared with the equation of motion: this runs 16 times per drive period
  const sa = model.drive.acceleration(t);
  const st = sin(theta);
  const ct = cos(theta);
  const acc = rhsAt(model, sa, st, ct, rate);
  // body position d (sin theta, cos theta), x right, y up; clockwise-positive theta
  const ax = sa * model.sinBeta + d * (acc * ct - rate * rate * st);
  const ay = sa * model.cosBeta + d * (-acc * st - rate * rate * ct);
  return mass * hypot(ax, ay + model.g);
}

function energy(model: RigModel, theta: number, rate: number): number {
  const { mass, comDistance: d, inertia } = model.body;
  return 0.5 * inertia * rate * rate + mass * model.g * d * (1 + cos(theta));
}

/**
 * Full nonlinear motion of the rig from its start state over run.duration.
 *
 * Method: theta'' from `rhs` (equations.ts) integrated by odex with dense output at run.rtol/run.atol; the dense
 * interpolant gives the uniform output grid, the stroboscopic section at phase run.strobePhase + 2 pi n, and the
 * slow motion as the mean of 16 equally spaced phase samples per drive period (trapezoid rule on a periodic
 * integrand). Memory is bounded by run.outputPoints whatever the run length: when there are more drive periods than
 * output points, every k-th period is kept. The outcome comes from `classifyMotion` on the slow motion after
 * run.transientFraction of the run. Throws an Error naming every offending field for an invalid case.
 */
export function simulateMotion(input: CaseParams, hooks: MotionHooks = {}): MotionResult {
  // validated again here: sweeps build cases with setField, and an impossible one must fail loudly, not yield NaN
  const params = assertCase(input);
  if (params.body.kind === 'chain') return simulateChainMotion(params, hooks);
  const nominal = buildModel(params);
  // Drive noise (drive-noise.ts) replaces the pivot motion; Floquet analyses keep the nominal drive.
  const model = params.noise ? { ...nominal, drive: noisyDrive(nominal.drive, params.noise) } : nominal;
  const drive = model.drive;
  const run = params.run;
  const duration = run.duration;
  const nOut = run.outputPoints;

  const out = {
    t: new Float64Array(nOut),
    theta: new Float64Array(nOut),
    rate: new Float64Array(nOut),
    pivotPosition: new Float64Array(nOut),
    energy: new Float64Array(nOut),
    pivotForce: new Float64Array(nOut),
  };
  const dtOut = duration / (nOut - 1);
  let kOut = 0;

  const phi0 = run.strobePhase;
  const totalPhase = drive.phase(duration);
  const periods = Math.max(0, Math.floor((totalPhase - phi0) / (2 * Math.PI)));
  const stride = Math.max(1, Math.ceil((periods + 1) / nOut));
  const keep = Math.floor(periods / stride) + 1;
  const strobe = { t: new Float64Array(keep), theta: new Float64Array(keep), rate: new Float64Array(keep) };
  const slow = { t: new Float64Array(keep), theta: new Float64Array(keep), rate: new Float64Array(keep) };
  let kStrobe = 0;
  let kSlow = 0;
  let jPhase = 0; // phase sample index: phase = phi0 + 2 pi j / PHASE_SAMPLES
  let tPhase = drive.timeAtPhase(phi0);
  let sumTheta = 0;
  let sumRate = 0;
  let peakForce = 0;

  const takeOutput = (t: number, theta: number, rate: number) => {
    out.t[kOut] = t;
    out.theta[kOut] = theta;
    out.rate[kOut] = rate;
    out.pivotPosition[kOut] = drive.position(t);
    out.energy[kOut] = energy(model, theta, rate);
    const force = pivotForce(model, t, theta, rate);
    out.pivotForce[kOut] = force;
    if (force > peakForce) peakForce = force;
    kOut++;
  };
  const takePhaseSample = (t: number, theta: number, rate: number) => {
    const period = Math.floor(jPhase / PHASE_SAMPLES);
    const within = jPhase % PHASE_SAMPLES;
    const kept = period % stride === 0;
    if (within === 0 && kept && kStrobe < keep) {
      strobe.t[kStrobe] = t;
      strobe.theta[kStrobe] = theta;
      strobe.rate[kStrobe] = rate;
      kStrobe++;
    }
    if (kept) {
      sumTheta += theta;
      sumRate += rate;
      if (within === PHASE_SAMPLES - 1 && kSlow < keep) {
        slow.t[kSlow] = drive.timeAtPhase(phi0 + 2 * Math.PI * (period + 0.5));
        slow.theta[kSlow] = sumTheta / PHASE_SAMPLES;
        slow.rate[kSlow] = sumRate / PHASE_SAMPLES;
        kSlow++;
        sumTheta = 0;
        sumRate = 0;
      }
    }
    const force = pivotForce(model, t, theta, rate);
    if (force > peakForce) peakForce = force;
    jPhase++;
    tPhase = drive.timeAtPhase(phi0 + (2 * Math.PI * jPhase) / PHASE_SAMPLES);
  };

  const y0 = [params.start.angle, params.start.rate];
  takeOutput(0, y0[0], y0[1]);
  while (tPhase <= 0) takePhaseSample(0, y0[0], y0[1]);

  let nextProgress = 0.01;
  let cancelled = false;
  // theta and rate from the dense interpolant, both in one pass
  const state = new Float64Array(2);
  const driven = params.drive.amplitude > 0;
  const result = integrate(
    rigDerivative(model),
    0,
    y0,
    duration,
    {
      rtol: run.rtol,
      atol: run.atol,
      dense: true,
      // far above what any accepted case needs (about 6 steps per drive period); a guard against endless stepping
      maxSteps: Math.ceil(200 * (periods + 1) + 2e5),
      initialStep: Math.min(duration, drive.period) / 50,
      // half a drive period: no aliasing of the forcing, and fewest calls; without a drive, an eighth of the free
      // swing period keeps the dense interpolant (whose own error estimate is off) accurate
      // with drive noise, also a quarter period of its highest band, so no band is stepped over
      maxStep: Math.min(
        driven ? drive.period / 2 : Math.min(duration / 10, (2 * Math.PI) / model.omega0 / 8),
        params.noise ? noiseMaxStep(params.noise) : Infinity,
      ),
      shouldCancel: hooks.shouldCancel
        ? () => {
            cancelled = hooks.shouldCancel?.() === true;
            return cancelled;
          }
        : undefined,
      cancelCheckEvery: 32,
    },
    (_tOld, t, _y, dense) => {
      if (!dense) return true;
      while (kOut < nOut) {
        const tk = kOut === nOut - 1 ? duration : kOut * dtOut;
        if (tk > t) break;
        dense.all(tk, state);
        takeOutput(tk, state[0], state[1]);
      }
      while (tPhase <= t) {
        dense.all(tPhase, state);
        takePhaseSample(tPhase, state[0], state[1]);
      }
      if (hooks.onProgress && t >= nextProgress * duration) {
        hooks.onProgress(Math.min(1, t / duration));
        nextProgress = Math.floor((t / duration) * 100 + 1) / 100;
      }
      return true;
    },
  );
  if (cancelled || result.status === 'cancelled') throw new EngineCancelledError();

  const trim = (a: Float64Array, n: number) => (n === a.length ? a : a.slice(0, n));
  const series: MotionSeries = {
    t: trim(out.t, kOut),
    theta: trim(out.theta, kOut),
    rate: trim(out.rate, kOut),
    pivotPosition: trim(out.pivotPosition, kOut),
    energy: trim(out.energy, kOut),
    pivotForce: trim(out.pivotForce, kOut),
  };
  const strobeOut = { t: trim(strobe.t, kStrobe), theta: trim(strobe.theta, kStrobe), rate: trim(strobe.rate, kStrobe) };
  const slowOut = { t: trim(slow.t, kSlow), theta: trim(slow.theta, kSlow), rate: trim(slow.rate, kSlow) };
  const { outcome, numbers } = classifyMotion(slowOut.t, slowOut.theta, run.transientFraction * duration, result.status);
  const drivePeriods = totalPhase / (2 * Math.PI);
  hooks.onProgress?.(1);
  return {
    engineVersion: ENGINE_VERSION,
    caseDigest: caseDigest(params),
    status: result.status,
    series,
    strobe: strobeOut,
    slow: slowOut,
    summary: {
      equivalentLength: model.L,
      naturalFrequency: model.omega0,
      driveOmega: drive.omega,
      drivePeriods,
      peakPivotAcceleration: drive.peakAcceleration,
      peakPivotAccelerationG: drive.peakAcceleration / params.gravity,
      peakPivotForce: peakForce,
      endTime: result.t,
      finalTheta: result.y[0],
      finalRate: result.y[1],
      periodStride: stride,
      rhsPerDrivePeriod: drivePeriods > 0 ? result.rhsEvaluations / drivePeriods : 0,
      acceptedSteps: result.acceptedSteps,
      rejectedSteps: result.rejectedSteps,
    },
    outcome,
    outcomeNumbers: numbers,
    rhsEvaluations: result.rhsEvaluations,
  };
}
