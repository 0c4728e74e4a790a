import type { Drive } from '../case/case-schema';
import { portable } from './portable-math';

const { cos, sin } = portable;

/** Pivot displacement along the drive line as a function of drive phase phi (rad), with its phi-derivatives. */
export interface DriveShape {
  /** m */
  position(phi: number): number;
  /** m/rad */
  dPhase(phi: number): number;
  /** m/rad^2 */
  d2Phase(phi: number): number;
}

export interface DriveKinematics {
  /** rad/s at the (final) drive frequency */
  omega: number;
  /** s: 2 pi / omega */
  period: number;
  /** false when a ramp makes the drive non-periodic */
  periodic: boolean;
  /** Drive phase phi(t), rad; phi = omega t without a ramp. */
  phase(t: number): number;
  /** d phi / dt, rad/s */
  phaseRate(t: number): number;
  /** d^2 phi / dt^2, rad/s^2 (non-zero during a ramp only) */
  phaseAccel(t: number): number;
  /** First time t >= 0 with phase(t) = phi (phi >= 0). */
  timeAtPhase(phi: number): number;
  /** Pivot displacement s(t) along the drive line, m (upward positive for a vertical drive). */
  position(t: number): number;
  /** s'(t), m/s */
  velocity(t: number): number;
  /** s''(t), m/s^2 */
  acceleration(t: number): number;
  /** <s'^2> over one period at the final frequency, m^2/s^2 (a^2 omega^2 / 2 for a sine) */
  meanSquareVelocity: number;
  /** max |s'| over a period at the final frequency, m/s */
  peakVelocity: number;
  /** max |s''| over a period at the final frequency, m/s^2 */
  peakAcceleration: number;
  /** max s - min s over a period, m (2a for a sine, 2r for a crank-slider) */
  stroke: number;
  shape: DriveShape;
}

/** Samples per period for the periodic averages; the trapezoid rule on a smooth periodic integrand is spectrally accurate. */
const AVERAGE_SAMPLES = 1024;
/** Samples for peak search; refined by golden-section around the best sample. */
const PEAK_SAMPLES = 2048;

/**
 * Drive shape per unit phase.
 * - sine: s = a cos phi.
 * - crank-slider (machine-design handbook): x = r cos phi + sqrt(l^2 - r^2 sin^2 phi), measured from the slider's
 *   mid-stroke reference x - l, so l -> infinity gives the sine; stroke 2r.
 * - harmonics: s = a sum_k rel_k cos(k phi + phase_k).
 */
export function driveShape(drive: Drive): DriveShape {
  const a = drive.amplitude;
  const w = drive.waveform;
  switch (w.kind) {
    case 'sine':
      return {
        position: (phi) => a * cos(phi),
        dPhase: (phi) => -a * sin(phi),
        d2Phase: (phi) => -a * cos(phi),
      };
    case 'crank-slider': {
      const r = a;
      const l = w.connectingRod;
      const l2 = l * l;
      const r2 = r * r;
      return {
        position: (phi) => {
          const s = sin(phi);
          return r * cos(phi) + Math.sqrt(l2 - r2 * s * s) - l;
        },
        dPhase: (phi) => {
          const s = sin(phi);
          const c = cos(phi);
          return -r * s - (r2 * s * c) / Math.sqrt(l2 - r2 * s * s);
        },
        d2Phase: (phi) => {
          const s = sin(phi);
          const c = cos(phi);
          const d2 = l2 - r2 * s * s;
          const d = Math.sqrt(d2);
          return -r * c - (r2 * (c * c - s * s)) / d - (r2 * r2 * s * s * c * c) / (d2 * d);
        },
      };
    }
    case 'harmonics': {
      const k = Float64Array.from(w.terms, (t) => t.order);
      const amp = Float64Array.from(w.terms, (t) => a * t.relAmplitude);
      const ph = Float64Array.from(w.terms, (t) => t.phase);
      const n = k.length;
      return {
        position: (phi) => {
          let sum = 0;
          for (let i = 0; i < n; i++) sum += amp[i] * cos(k[i] * phi + ph[i]);
          return sum;
        },
        dPhase: (phi) => {
          let sum = 0;
          for (let i = 0; i < n; i++) sum -= amp[i] * k[i] * sin(k[i] * phi + ph[i]);
          return sum;
        },
        d2Phase: (phi) => {
          let sum = 0;
          for (let i = 0; i < n; i++) sum -= amp[i] * k[i] * k[i] * cos(k[i] * phi + ph[i]);
          return sum;
        },
      };
    }
  }
}

function peakAbs(f: (phi: number) => number): number {
  let best = 0;
  let bestPhi = 0;
  const h = (2 * Math.PI) / PEAK_SAMPLES;
  for (let i = 0; i < PEAK_SAMPLES; i++) {
    const v = Math.abs(f(i * h));
    if (v > best) {
      best = v;
      bestPhi = i * h;
    }
  }
  // golden-section refinement of |f| around the best sample
  let lo = bestPhi - h;
  let hi = bestPhi + h;
  const gr = (Math.sqrt(5) - 1) / 2;
  for (let it = 0; it < 40; it++) {
    const m1 = hi - gr * (hi - lo);
    const m2 = lo + gr * (hi - lo);
    if (Math.abs(f(m1)) > Math.abs(f(m2))) hi = m2;
    else lo = m1;
  }
  return Math.max(best, Math.abs(f((lo + hi) / 2)));
}

/**
 * Pivot motion s(t) along the drive line and its derivatives.
 *
 * Method: s(t) = S(phi(t)) with the shape S of `driveShape`; s' = S'(phi) phi', s'' = S''(phi) phi'^2 + S'(phi) phi''.
 * Without a ramp phi = omega t. A ramp raises the frequency linearly from `fromFrequency` to `frequency` over its
 * duration, so phi(t) = 2 pi (f0 t + (f - f0) t^2 / (2 T_r)) for t < T_r, then grows at omega.
 * Averages and peaks are taken over one period at the final frequency (trapezoid rule, 1024 samples; peaks by
 * sampling plus golden-section refinement).
 */
export function driveKinematics(drive: Drive): DriveKinematics {
  const omega = 2 * Math.PI * drive.frequency;
  const period = (2 * Math.PI) / omega;
  const shape = driveShape(drive);
  const ramp = drive.ramp;

  let phase: (t: number) => number;
  let phaseRate: (t: number) => number;
  let phaseAccel: (t: number) => number;
  let timeAtPhase: (phi: number) => number;
  if (!ramp) {
    phase = (t) => omega * t;
    phaseRate = () => omega;
    phaseAccel = () => 0;
    timeAtPhase = (phi) => phi / omega;
  } else {
    const w0 = 2 * Math.PI * ramp.fromFrequency;
    const tr = ramp.duration;
    const alpha = (omega - w0) / tr;
    const phiRampEnd = w0 * tr + 0.5 * alpha * tr * tr;
    phase = (t) => (t < tr ? w0 * t + 0.5 * alpha * t * t : phiRampEnd + omega * (t - tr));
    phaseRate = (t) => (t < tr ? w0 + alpha * t : omega);
    phaseAccel = (t) => (t < tr ? alpha : 0);
    timeAtPhase = (phi) => {
      if (phi >= phiRampEnd) return tr + (phi - phiRampEnd) / omega;
      if (alpha === 0) return phi / w0;
      // positive root of 0.5 alpha t^2 + w0 t - phi = 0, written to avoid cancellation
      return (2 * phi) / (w0 + Math.sqrt(w0 * w0 + 2 * alpha * phi));
    };
  }

  let position: (t: number) => number;
  let velocity: (t: number) => number;
  let acceleration: (t: number) => number;
  if (!ramp && drive.waveform.kind === 'sine') {
    // the common case, written out: it is evaluated once per right-hand-side call
    const a = drive.amplitude;
    const aw = a * omega;
    const aw2 = aw * omega;
    position = (t) => a * cos(omega * t);
    velocity = (t) => -aw * sin(omega * t);
    acceleration = (t) => -aw2 * cos(omega * t);
  } else {
    position = (t) => shape.position(phase(t));
    velocity = (t) => shape.dPhase(phase(t)) * phaseRate(t);
    acceleration = (t) => {
      const phi = phase(t);
      const r = phaseRate(t);
      const acc = phaseAccel(t);
      return shape.d2Phase(phi) * r * r + (acc === 0 ? 0 : shape.dPhase(phi) * acc);
    };
  }

  let sumSq = 0;
  let min = Number.POSITIVE_INFINITY;
  let max = Number.NEGATIVE_INFINITY;
  for (let i = 0; i < AVERAGE_SAMPLES; i++) {
    const phi = (2 * Math.PI * i) / AVERAGE_SAMPLES;
    const v = shape.dPhase(phi);
    sumSq += v * v;
    const p = shape.position(phi);
    if (p < min) min = p;
    if (p > max) max = p;
  }
  // refine the extremes of the position for the stroke
  const posMax = peakAbs((phi) => shape.position(phi) - (min + max) / 2);
  const stroke = 2 * posMax;

  return {
    omega,
    period,
    periodic: !ramp,
    phase,
    phaseRate,
    phaseAccel,
    timeAtPhase,
    position,
    velocity,
    acceleration,
    meanSquareVelocity: (sumSq / AVERAGE_SAMPLES) * omega * omega,
    peakVelocity: peakAbs(shape.dPhase) * omega,
    peakAcceleration: peakAbs(shape.d2Phase) * omega * omega,
    stroke: Number.isFinite(stroke) ? Math.max(stroke, max - min) : max - min,
    shape,
  };
}
