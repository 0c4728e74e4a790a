import type { CaseParams } from '../case/case-schema';
import { caseDigest } from '../case/canonical';
import { bodyProperties } from './body';
import { buildChainModel, chainAccelerations, chainDerivative, chainEnergy, chainPivotForce, chainStart } from './chain';
import { classifyMotion, type MotionOutcome, type OutcomeNumbers } from './classify';
import { integrate } from './integrate';
import { EngineCancelledError, type ChainMotion, type MotionHooks, type MotionResult } from './motion';
import { ENGINE_VERSION } from './version';

/** Phase samples per drive period for the slow average and the force peak (as motion.ts). */
const PHASE_SAMPLES = 16;

/** Outcomes from best to worst: a chain's outcome is its worst link's. */
const SEVERITY: readonly MotionOutcome[] = ['holds-upright', 'settles-tilted', 'falls', 'tumbles', 'irregular'];

/**
 * Full nonlinear motion of a chain case (validated by the caller), every link's absolute angle kept.
 *
 * Method: as simulateMotion (motion.ts) with the chain's equations (chain.ts): odex with dense output, a uniform
 * output grid, the stroboscopic section and the slow motion (16 phase samples per drive period) of every link. The
 * outcome is the worst of the links' outcomes, each classified by classifyMotion on its slow angle; `series`,
 * `strobe` and `slow` carry the first link (the one on the pivot), `chain` every link.
 */
export function simulateChainMotion(params: CaseParams, hooks: MotionHooks = {}): MotionResult {
  const model = buildChainModel(params);
  const n = model.n;
  const drive = model.drive;
  const run = params.run;
  const duration = run.duration;
  const nOut = run.outputPoints;
  const rigid = bodyProperties(params.body, params.gravity);

  const floats = (count: number) => Array.from({ length: n }, () => new Float64Array(count));
  const out = {
    t: new Float64Array(nOut),
    theta: floats(nOut),
    rate: floats(nOut),
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
  const strobe = { t: new Float64Array(keep), theta: floats(keep), rate: floats(keep) };
  const slow = { t: new Float64Array(keep), theta: floats(keep), rate: floats(keep) };
  let kStrobe = 0;
  let kSlow = 0;
  let jPhase = 0;
  let tPhase = drive.timeAtPhase(phi0);
  const sumTheta = new Float64Array(n);
  const sumRate = new Float64Array(n);
  let peakForce = 0;
  const acc = new Float64Array(n);
  const work = new Float64Array(n * (n + 3));
  const state = new Float64Array(2 * n);

  const force = (t: number, y: ArrayLike<number>): number => {
    chainAccelerations(model, t, y, acc, work);
    return chainPivotForce(model, t, y, acc);
  };
  const takeOutput = (t: number, y: ArrayLike<number>) => {
    out.t[kOut] = t;
    for (let i = 0; i < n; i++) {
      out.theta[i][kOut] = y[i];
      out.rate[i][kOut] = y[n + i];
    }
    out.pivotPosition[kOut] = drive.position(t);
    out.energy[kOut] = chainEnergy(model, y);
    const f = force(t, y);
    out.pivotForce[kOut] = f;
    if (f > peakForce) peakForce = f;
    kOut++;
  };
  const takePhaseSample = (t: number, y: ArrayLike<number>) => {
    const period = Math.floor(jPhase / PHASE_SAMPLES);
    const within = jPhase % PHASE_SAMPLES;
    const kept = period % stride === 0;
    if (within === 0 && kept && kStrobe < keep) {
      strobe.t[kStrobe] = t;
      for (let i = 0; i < n; i++) {
        strobe.theta[i][kStrobe] = y[i];
        strobe.rate[i][kStrobe] = y[n + i];
      }
      kStrobe++;
    }
    if (kept) {
      for (let i = 0; i < n; i++) {
        sumTheta[i] += y[i];
        sumRate[i] += y[n + i];
      }
      if (within === PHASE_SAMPLES - 1 && kSlow < keep) {
        slow.t[kSlow] = drive.timeAtPhase(phi0 + 2 * Math.PI * (period + 0.5));
        for (let i = 0; i < n; i++) {
          slow.theta[i][kSlow] = sumTheta[i] / PHASE_SAMPLES;
          slow.rate[i][kSlow] = sumRate[i] / PHASE_SAMPLES;
        }
        kSlow++;
        sumTheta.fill(0);
        sumRate.fill(0);
      }
    }
    const f = force(t, y);
    if (f > peakForce) peakForce = f;
    jPhase++;
    tPhase = drive.timeAtPhase(phi0 + (2 * Math.PI * jPhase) / PHASE_SAMPLES);
  };

  const y0 = chainStart(params);
  takeOutput(0, y0);
  while (tPhase <= 0) takePhaseSample(0, y0);

  let nextProgress = 0.01;
  let cancelled = false;
  const driven = params.drive.amplitude > 0;
  const result = integrate(
    chainDerivative(model),
    0,
    y0,
    duration,
    {
      rtol: run.rtol,
      atol: run.atol,
      dense: true,
      maxSteps: Math.ceil(200 * (periods + 1) + 2e5),
      initialStep: Math.min(duration, drive.period) / 50,
      // as motion.ts; undriven, an eighth of the locked chain's swing period (the chain's fastest mode is faster,
      // but the error control holds the steps to it)
      maxStep: driven ? drive.period / 2 : Math.min(duration / 10, (2 * Math.PI) / rigid.naturalFrequency / 8),
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
      const at = (tk: number) => {
        dense.all(tk, state);
        return state;
      };
      while (kOut < nOut) {
        const tk = kOut === nOut - 1 ? duration : kOut * dtOut;
        if (tk > t) break;
        takeOutput(tk, at(tk));
      }
      while (tPhase <= t) takePhaseSample(tPhase, at(tPhase));
      if (hooks.onProgress && t >= nextProgress * duration) {
        hooks.onProgress(Math.min(1, t / duration));
        nextProgress = Math.floor((t / duration) * 100 + 1) / 100;
      }
      return true;
    },
  );
  if (cancelled || result.status === 'cancelled') throw new EngineCancelledError();

  const trim = (a: Float64Array, k: number) => (k === a.length ? a : a.slice(0, k));
  const trimAll = (a: Float64Array[], k: number) => a.map((x) => trim(x, k));
  const slowT = trim(slow.t, kSlow);
  const linkOutcomes = slow.theta.map((theta) =>
    classifyMotion(slowT, trim(theta, kSlow), run.transientFraction * duration, result.status),
  );
  let worst = 0;
  linkOutcomes.forEach((o, i) => {
    const w = linkOutcomes[worst];
    const rank = SEVERITY.indexOf(o.outcome) - SEVERITY.indexOf(w.outcome);
    if (rank > 0 || (rank === 0 && o.numbers.maxDeviation > w.numbers.maxDeviation)) worst = i;
  });
  const decisive = linkOutcomes[worst];
  const numbers: OutcomeNumbers = { ...decisive.numbers, reason: `link ${worst + 1}: ${decisive.numbers.reason}` };
  const chain: ChainMotion = {
    links: n,
    theta: trimAll(out.theta, kOut),
    rate: trimAll(out.rate, kOut),
    strobeTheta: trimAll(strobe.theta, kStrobe),
    strobeRate: trimAll(strobe.rate, kStrobe),
    slowTheta: trimAll(slow.theta, kSlow),
    outcomes: linkOutcomes.map((o) => o.outcome),
    decidingLink: worst + 1,
  };
  const drivePeriods = totalPhase / (2 * Math.PI);
  hooks.onProgress?.(1);
  return {
    engineVersion: ENGINE_VERSION,
    caseDigest: caseDigest(params),
    status: result.status,
    series: {
      t: trim(out.t, kOut),
      theta: chain.theta[0],
      rate: chain.rate[0],
      pivotPosition: trim(out.pivotPosition, kOut),
      energy: trim(out.energy, kOut),
      pivotForce: trim(out.pivotForce, kOut),
    },
    strobe: { t: trim(strobe.t, kStrobe), theta: chain.strobeTheta[0], rate: chain.strobeRate[0] },
    slow: { t: slowT, theta: chain.slowTheta[0], rate: trim(slow.rate[0], kSlow) },
    summary: {
      equivalentLength: rigid.equivalentLength,
      naturalFrequency: rigid.naturalFrequency,
      driveOmega: drive.omega,
      drivePeriods,
      peakPivotAcceleration: drive.peakAcceleration,
      peakPivotAccelerationG: drive.peakAcceleration / params.gravity,
      peakPivotForce: peakForce,
      endTime: result.t,
      finalTheta: result.y[0],
      finalRate: result.y[n],
      periodStride: stride,
      rhsPerDrivePeriod: drivePeriods > 0 ? result.rhsEvaluations / drivePeriods : 0,
      acceptedSteps: result.acceptedSteps,
      rejectedSteps: result.rejectedSteps,
    },
    outcome: decisive.outcome,
    outcomeNumbers: numbers,
    rhsEvaluations: result.rhsEvaluations,
    chain,
  };
}
