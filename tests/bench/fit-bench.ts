// Free-swing fit benchmark: a 15 000-point generated trace (30 s at 500 Hz, 0.05 degree noise, 1.5 degree sensor
// zero), each damping model fitted in one engine worker thread, as the Bench tab runs it. Target: under 5 s.
import { lastValueFrom } from 'rxjs';
import { templateCase } from '../../shared/case/templates';
import { createEnginePool } from '../../server/compute/engine-pool';
import { FIT_MODELS, type FitResult } from '../../shared/engine/fit';
import { syntheticTrace } from '../../shared/engine/synthetic-trace';

const DEG = Math.PI / 180;

export async function run(): Promise<void> {
  const c = templateCase();
  const trace = syntheticTrace(
    {
      ...c,
      body: { kind: 'point-mass', length: 0.42, mass: 1 },
      drive: { ...c.drive, amplitude: 0 },
      damping: { ...c.damping, viscousRatio: 0.004, quadratic: 0.02 },
      start: { angle: Math.PI + 20 * DEG, rate: 0 },
    },
    { sampleRate: 500, duration: 30, noise: 0.05 * DEG, offset: 1.5 * DEG, fromHanging: true, seed: 1 },
  );
  const pool = createEnginePool(1);
  try {
    // one small fit first, so the thread's start-up is not counted
    await lastValueFrom(pool.fit({ trace: { time: trace.time.slice(0, 2000), angle: trace.angle.slice(0, 2000) }, model: 'viscous' }));
    console.log(`fit of ${trace.time.length} points in one worker thread (target < 5000 ms):`);
    for (const model of FIT_MODELS) {
      const t0 = performance.now();
      const last = await lastValueFrom(pool.fit({ trace, model }));
      const wallMs = performance.now() - t0;
      if (last.type !== 'result') throw new Error('fit ended without a result');
      const fit: FitResult = last.value;
      console.log(
        `  ${model.padEnd(18)} ${wallMs.toFixed(0).padStart(6)} ms  ${fit.iterations} iterations, ` +
          `L = ${fit.fitted.equivalentLength.toFixed(5)} m ± ${fit.uncertainty.equivalentLength.toExponential(1)}, ` +
          `zeta = ${fit.fitted.viscousRatio.toFixed(5)}, RMS residual ${(fit.rmsResidual / DEG).toFixed(4)}°`,
      );
    }
  } finally {
    pool.dispose();
  }
}
