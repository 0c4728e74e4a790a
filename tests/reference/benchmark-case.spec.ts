import { describe, it } from 'vitest';
import { simulateMotion } from '../../shared/engine/motion';
import { BENCHMARK_REFERENCE, benchmarkCase } from '../../shared/engine/benchmark-case';
import { expectNear } from './check';

// Source: the benchmark case of docs/physics.md, with its tight-tolerance reference (rtol 1e-13, two independent
// integrators agreeing to 5e-14): after 200 s the angle is 4.96995e-9 rad from the upright in magnitude and the
// rate 4.07327e-7 rad/s in magnitude.

describe('benchmark case vs its tight-tolerance reference (docs/physics.md)', () => {
  it('ends within 1e-9 rad of the reference angle and near the reference rate (docs/physics.md benchmark)', () => {
    const r = simulateMotion(benchmarkCase());
    expectNear(Math.abs(r.summary.finalTheta), BENCHMARK_REFERENCE.finalAngle, 1e-9, 'final angle magnitude (docs/physics.md benchmark)');
    // the same accuracy carried to the rate by the slow frequency (about 5.5 rad/s here)
    expectNear(Math.abs(r.summary.finalRate), BENCHMARK_REFERENCE.finalRate, 5.5e-9, 'final rate magnitude (docs/physics.md benchmark)');
  });
});
