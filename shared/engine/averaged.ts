import type { CaseParams, Drive } from '../case/case-schema';
import { assertCase } from '../case/validate';
import { bodyProperties } from './body';
import { driveKinematics } from './drive';
import { portable } from './portable-math';

const { cos, sin } = portable;

export interface AveragedEquilibrium {
  /** rad from the upright, in (-pi, pi] */
  angle: number;
  /** U_eff'' > 0 */
  stable: boolean;
  /** 1/s^2: U_eff''(angle) */
  curvature: number;
  /** rad/s: sqrt(U_eff'') of a stable equilibrium, else null */
  slowFrequency: number | null;
  /** Hz */
  slowFrequencyHz: number | null;
}

export interface AveragedAnalysis {
  /** m */
  equivalentLength: number;
  /** m^2/s^2: <s'^2> at the final drive frequency */
  meanSquareVelocity: number;
  /** <s'^2> / (g L): (a w)^2 / (2 g L) for a sine; above 1 the upright holds with a vertical drive */
  stiffnessRatio: number;
  /** w / omega0: the theory needs it large */
  frequencyRatio: number;
  /** a / L: the theory needs it small */
  amplitudeRatio: number;
  /** samples of U_eff over [-pi, pi], 1/s^2 (potential energy over I) */
  potential: { theta: Float64Array; value: Float64Array };
  equilibria: AveragedEquilibrium[];
  /** the upright's stability (vertical drive only; null when the drive is not vertical, where it is no equilibrium) */
  uprightStable: boolean | null;
  /** rad/s: slow frequency about the upright (vertical drive, when it holds) */
  uprightSlowFrequency: number | null;
  /** m: least drive amplitude that holds the upright at this frequency (vertical drive), null if none */
  lowerAmplitude: number | null;
  /** Hz: least drive frequency that holds the upright at this amplitude (vertical drive), null if none */
  lowerFrequency: number | null;
  /** rad: tilt of the stable tilted equilibrium from the downward vertical (horizontal drive), null if hanging straight */
  tiltFromDown: number | null;
}

const POTENTIAL_SAMPLES = 721;
const VERTICAL_TOLERANCE = 1e-9;

/** Steady-state drive (any ramp removed): averaged theory describes the motion at the final frequency. */
function steady(drive: Drive): Drive {
  return { direction: drive.direction, amplitude: drive.amplitude, frequency: drive.frequency, waveform: drive.waveform };
}

function meanSquareVelocity(drive: Drive): number {
  return driveKinematics(steady(drive)).meanSquareVelocity;
}

/**
 * Kapitza's effective potential (per unit moment of inertia) for a fast pivot drive along beta:
 * U_eff(theta) = (g/L) cos(theta) + <s'^2> sin^2(theta - beta) / (2 L^2).
 * Reference: P. L. Kapitza (1951); Landau & Lifshitz, Mechanics, section 30.
 */
export function effectivePotential(theta: number, g: number, L: number, msv: number, beta: number): number {
  const s = sin(theta - beta);
  return (g / L) * cos(theta) + (msv * s * s) / (2 * L * L);
}

function dPotential(theta: number, g: number, L: number, msv: number, beta: number): number {
  return -(g / L) * sin(theta) + (msv / (2 * L * L)) * sin(2 * (theta - beta));
}

function d2Potential(theta: number, g: number, L: number, msv: number, beta: number): number {
  return -(g / L) * cos(theta) + (msv / (L * L)) * cos(2 * (theta - beta));
}

function wrap(angle: number): number {
  const w = angle - 2 * Math.PI * Math.round(angle / (2 * Math.PI));
  return w <= -Math.PI ? w + 2 * Math.PI : w;
}

/** Equilibria of U_eff: sign changes of U_eff' on a 1440-cell grid, refined by bisection to machine precision. */
function findEquilibria(g: number, L: number, msv: number, beta: number): AveragedEquilibrium[] {
  const n = 1440;
  const found: number[] = [];
  const d = (th: number) => dPotential(th, g, L, msv, beta);
  const scale = g / L + msv / (L * L);
  let prevTheta = -Math.PI;
  let prev = d(prevTheta);
  for (let i = 1; i <= n; i++) {
    const th = -Math.PI + (2 * Math.PI * i) / n;
    const cur = d(th);
    if (Math.abs(prev) <= 1e-14 * scale) found.push(prevTheta);
    else if (prev * cur < 0) {
      let lo = prevTheta;
      let hi = th;
      let flo = prev;
      for (let it = 0; it < 200 && hi - lo > 1e-15; it++) {
        const mid = 0.5 * (lo + hi);
        const fm = d(mid);
        if (fm === 0) {
          lo = hi = mid;
          break;
        }
        if ((fm < 0) === (flo < 0)) {
          lo = mid;
          flo = fm;
        } else hi = mid;
      }
      found.push(0.5 * (lo + hi));
    }
    prevTheta = th;
    prev = cur;
  }
  const unique: number[] = [];
  for (const a of found.map(wrap)) if (!unique.some((u) => Math.abs(wrap(u - a)) < 1e-9)) unique.push(a);
  return unique
    .sort((a, b) => a - b)
    .map((angle) => {
      const curvature = d2Potential(angle, g, L, msv, beta);
      const stable = curvature > 0;
      const slow = stable ? Math.sqrt(curvature) : null;
      return { angle, stable, curvature, slowFrequency: slow, slowFrequencyHz: slow === null ? null : slow / (2 * Math.PI) };
    });
}

/**
 * Least drive amplitude (m) that holds the upright by averaged theory at drive frequency `frequencyHz`, for the
 * case's waveform: <s'^2> = g L. Sine: a = sqrt(2 g L) / w (Kapitza; Landau & Lifshitz section 30). Other
 * waveforms: bisection on the amplitude (the crank-slider's shape changes with r / l). Null when no amplitude the
 * waveform allows reaches it.
 */
export function averagedLowerAmplitude(params: CaseParams, frequencyHz: number): number | null {
  const L = bodyProperties(params.body, params.gravity).equivalentLength;
  return amplitudeForMeanSquare(params.drive, frequencyHz, params.gravity * L);
}

/** Amplitude (m) whose steady drive at `frequencyHz` has mean-square pivot velocity `target`, or null. */
export function amplitudeForMeanSquare(drive: Drive, frequencyHz: number, target: number): number | null {
  const at = (a: number) => meanSquareVelocity({ ...drive, amplitude: a, frequency: frequencyHz });
  if (drive.waveform.kind !== 'crank-slider') {
    const perSquare = at(1);
    return perSquare > 0 ? Math.sqrt(target / perSquare) : null;
  }
  const hi0 = drive.waveform.connectingRod * (1 - 1e-9);
  if (at(hi0) < target) return null;
  let lo = 0;
  let hi = hi0;
  for (let it = 0; it < 100 && hi - lo > 1e-15 * hi0; it++) {
    const mid = 0.5 * (lo + hi);
    if (at(mid) < target) lo = mid;
    else hi = mid;
  }
  return 0.5 * (lo + hi);
}

/**
 * Least drive frequency (Hz) that holds the upright by averaged theory at drive amplitude `amplitude`:
 * <s'^2> grows as w^2 at a fixed shape, so f = sqrt(g L / c) / (2 pi) with c = <s'^2> / w^2.
 * Sine: w = sqrt(2 g L) / a. Null for a zero amplitude.
 */
export function averagedLowerFrequency(params: CaseParams, amplitude: number): number | null {
  const L = bodyProperties(params.body, params.gravity).equivalentLength;
  const w1 = 2 * Math.PI;
  const c = meanSquareVelocity({ ...params.drive, amplitude, frequency: 1 }) / (w1 * w1);
  if (!(c > 0)) return null;
  return Math.sqrt((params.gravity * L) / c) / (2 * Math.PI);
}

/**
 * Averaged (Kapitza) analysis of a case: effective potential, its equilibria with stability and slow frequency,
 * the upright's lower thresholds (vertical drive) and the tilt of a horizontally driven body.
 *
 * Method: U_eff as in `effectivePotential` with <s'^2> of the actual waveform (drive.ts); equilibria where
 * U_eff' = 0, stable where U_eff'' > 0, slow frequency sqrt(U_eff''). Vertical sine: upright holds iff
 * a^2 w^2 > 2 g L, slow frequency Omega^2 = a^2 w^2 / (2 L^2) - g / L. Horizontal: cos(phi*) = 2 g L / (a^2 w^2)
 * from the downward vertical. Valid when w >> omega0 and a << L (see frequencyRatio, amplitudeRatio); the upper
 * stability limit is beyond this theory (Floquet analysis covers it).
 * Throws an Error naming every offending field for an invalid case.
 * References: P. L. Kapitza, Zh. Eksp. Teor. Fiz. 21, 588 (1951); Landau & Lifshitz, Mechanics, section 30.
 */
export function averagedAnalysis(input: CaseParams): AveragedAnalysis {
  const params = assertCase(input);
  const g = params.gravity;
  const body = bodyProperties(params.body, g);
  const L = body.equivalentLength;
  const beta = params.drive.direction;
  const msv = meanSquareVelocity(params.drive);
  const theta = new Float64Array(POTENTIAL_SAMPLES);
  const value = new Float64Array(POTENTIAL_SAMPLES);
  for (let i = 0; i < POTENTIAL_SAMPLES; i++) {
    theta[i] = -Math.PI + (2 * Math.PI * i) / (POTENTIAL_SAMPLES - 1);
    value[i] = effectivePotential(theta[i], g, L, msv, beta);
  }
  const equilibria = findEquilibria(g, L, msv, beta);
  const vertical = Math.abs(sin(beta)) < VERTICAL_TOLERANCE;
  const horizontal = Math.abs(cos(beta)) < VERTICAL_TOLERANCE;
  const uprightCurvature = d2Potential(0, g, L, msv, beta);
  const uprightStable = vertical ? uprightCurvature > 0 : null;
  let tiltFromDown: number | null = null;
  if (horizontal) {
    const tilted = equilibria.filter((e) => e.stable && Math.abs(Math.abs(e.angle) - Math.PI) > 1e-9 && Math.abs(e.angle) > 1e-9);
    if (tilted.length > 0) tiltFromDown = Math.PI - Math.abs(tilted[0].angle);
  }
  return {
    equivalentLength: L,
    meanSquareVelocity: msv,
    stiffnessRatio: msv / (g * L),
    frequencyRatio: (2 * Math.PI * params.drive.frequency) / body.naturalFrequency,
    amplitudeRatio: params.drive.amplitude / L,
    potential: { theta, value },
    equilibria,
    uprightStable,
    uprightSlowFrequency: vertical && uprightCurvature > 0 ? Math.sqrt(uprightCurvature) : null,
    lowerAmplitude: vertical ? averagedLowerAmplitude(params, params.drive.frequency) : null,
    lowerFrequency: vertical ? averagedLowerFrequency(params, params.drive.amplitude) : null,
    tiltFromDown,
  };
}
