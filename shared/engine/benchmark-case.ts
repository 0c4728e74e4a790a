import { CASE_SCHEMA_VERSION, STANDARD_GRAVITY, type CaseParams } from '../case/case-schema';

/**
 * The benchmark case of the project's reference notes: vertical sine drive, L = 0.2 m point mass, a = 0.01 m,
 * f = 40 Hz, zeta = 0.01, start 0.1 rad from the upright at rest, 200 s (8000 drive periods), rtol 1e-10,
 * atol 1e-12.
 */
export function benchmarkCase(duration = 200): CaseParams {
  return {
    schemaVersion: CASE_SCHEMA_VERSION,
    body: { kind: 'point-mass', length: 0.2, mass: 0.1 },
    drive: { direction: 0, amplitude: 0.01, frequency: 40, waveform: { kind: 'sine' } },
    damping: { viscousRatio: 0.01, quadratic: 0, friction: 0, frictionSmoothing: 0.01 },
    start: { angle: 0.1, rate: 0 },
    gravity: STANDARD_GRAVITY,
    run: { duration, rtol: 1e-10, atol: 1e-12, outputPoints: 4000, strobePhase: 0, transientFraction: 0.5 },
  };
}

/** Tight-tolerance reference (rtol 1e-13, two integrators agreeing to 5e-14), magnitudes; and DOP853's cost. */
export const BENCHMARK_REFERENCE = {
  finalAngle: 4.96995e-9,
  finalRate: 4.07327e-7,
  dop853RhsPerPeriod: 150,
} as const;
