/**
 * Drive noise for motion runs: a seeded, band-limited random phase error or pivot displacement added to the drive.
 *
 * Method: the spectral representation of a stationary Gaussian process (Shinozuka & Deodatis, Appl. Mech. Rev. 44
 * (1991) 191-204, from memory): x(t) = sum_k sqrt(2 S dF) cos(2 pi f_k t + theta_k) over K = 64 equal bands of width
 * dF = B / K, f_k = (k - 1/2) dF, with independent phases theta_k uniform on [0, 2 pi) drawn from MT19937 seeded by
 * the case's noise seed. S is the flat one-sided spectral density, so the variance is S B: for phase jitter of RMS
 * sigma, S = sigma^2 / B; for amplitude noise, S is given (m^2/Hz). The sum is smooth, so its derivatives are exact.
 *
 * - phase jitter: s(t) = S(phi(t) + psi(t)), s' = S'(.) (phi' + psi'), s'' = S''(.) (phi' + psi')^2 + S'(.) (phi'' + psi'').
 * - amplitude noise: s(t) = S(phi(t)) + n(t) along the drive line (the shaker's signal noise and slow drift).
 *
 * Step control: a realisation is a fixed smooth function of time, so the adaptive integrator treats it like any
 * other forcing (the error estimate sees the noise); its largest step is capped at a quarter period of the highest
 * noise component, 1 / (4 B), so no band is stepped over (motion.ts). The drive's phase(t) and timeAtPhase used for
 * the stroboscopic section stay nominal: the section samples at the nominal drive phase.
 */
import type { DriveNoise } from '../case/case-schema';
import type { DriveKinematics } from './drive';
import { portable } from './portable-math';
import { mt19937Stream } from './seeded-random';

const { cos, sin } = portable;

/** Bands of the spectral representation. */
export const NOISE_BANDS = 64;

/** A band-limited noise realisation with its first two derivatives. */
export interface NoiseSignal {
  value(t: number): number;
  rate(t: number): number;
  accel(t: number): number;
  /** RMS of the process (the square root of S B) */
  rms: number;
}

/** The realisation of flat one-sided density `density` over [0, bandwidth] from `seed`. */
export function noiseSignal(density: number, bandwidth: number, seed: number): NoiseSignal {
  const rand = mt19937Stream(seed);
  const df = bandwidth / NOISE_BANDS;
  const amp = Math.sqrt(2 * density * df);
  const w = new Float64Array(NOISE_BANDS);
  const theta = new Float64Array(NOISE_BANDS);
  for (let k = 0; k < NOISE_BANDS; k++) {
    w[k] = 2 * Math.PI * (k + 0.5) * df;
    theta[k] = 2 * Math.PI * rand.normalized();
  }
  const sum = (t: number, f: (x: number) => number, power: number, sign: number): number => {
    let s = 0;
    for (let k = 0; k < NOISE_BANDS; k++) s += f(w[k] * t + theta[k]) * (power === 0 ? 1 : power === 1 ? w[k] : w[k] * w[k]);
    return sign * amp * s;
  };
  return {
    value: (t) => sum(t, cos, 0, 1),
    rate: (t) => sum(t, sin, 1, -1),
    accel: (t) => sum(t, cos, 2, -1),
    rms: Math.sqrt(density * bandwidth),
  };
}

/** The largest integrator step that resolves the noise: a quarter period of its highest band. */
export function noiseMaxStep(noise: DriveNoise): number {
  return 1 / (4 * noise.bandwidth);
}

/** The drive with noise added to its position, velocity and acceleration (phase and section timing nominal). */
export function noisyDrive(drive: DriveKinematics, noise: DriveNoise): DriveKinematics {
  if (noise.kind === 'amplitude') {
    const n = noiseSignal(noise.density, noise.bandwidth, noise.seed);
    return {
      ...drive,
      position: (t) => drive.position(t) + n.value(t),
      velocity: (t) => drive.velocity(t) + n.rate(t),
      acceleration: (t) => drive.acceleration(t) + n.accel(t),
    };
  }
  const psi = noiseSignal((noise.rms * noise.rms) / noise.bandwidth, noise.bandwidth, noise.seed);
  const shape = drive.shape;
  return {
    ...drive,
    position: (t) => shape.position(drive.phase(t) + psi.value(t)),
    velocity: (t) => shape.dPhase(drive.phase(t) + psi.value(t)) * (drive.phaseRate(t) + psi.rate(t)),
    acceleration: (t) => {
      const phi = drive.phase(t) + psi.value(t);
      const r = drive.phaseRate(t) + psi.rate(t);
      return shape.d2Phase(phi) * r * r + shape.dPhase(phi) * (drive.phaseAccel(t) + psi.accel(t));
    },
  };
}
