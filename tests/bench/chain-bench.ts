// Two-link chain benchmark: the `two-link-shaker` demo (a 200 mm, 30 g rod with a 150 mm, 20 g rod hinged on its
// tip, joint damping 2e-4 N m s/rad, vertical sine 10 mm at 50 Hz) over 100 s = 5000 drive periods at rtol 1e-10,
// atol 1e-12; and its Floquet margins (4 x 4 monodromy per evaluation, drive limits to 1e-6).
import { demoRigCase } from '../../shared/case/templates';
import type { CaseParams } from '../../shared/case/case-schema';
import { buildChainModel, chainDerivative, chainStart } from '../../shared/engine/chain';
import { floquetAnalysis } from '../../shared/engine/floquet';
import { integrate } from '../../shared/engine/integrate';
import { simulateMotion } from '../../shared/engine/motion';

/** The two-link benchmark case. */
export function twoLinkBenchmarkCase(): CaseParams {
  const demo = demoRigCase('two-link-shaker');
  if (!demo) throw new Error('two-link demo missing');
  return { ...demo, run: { ...demo.run, duration: 100, rtol: 1e-10, atol: 1e-12 } };
}

function best<T extends { wallMs: number }>(repeats: number, once: () => T): T {
  let winner: T | undefined;
  for (let i = 0; i < repeats; i++) {
    const r = once();
    if (!winner || r.wallMs < winner.wallMs) winner = r;
  }
  return winner as T;
}

export function run(): void {
  const params = twoLinkBenchmarkCase();
  const periods = params.run.duration * params.drive.frequency;
  const model = buildChainModel(params);
  const bare = best(3, () => {
    const t0 = performance.now();
    const r = integrate(chainDerivative(model), 0, chainStart(params), params.run.duration, {
      rtol: params.run.rtol, atol: params.run.atol, maxStep: model.drive.period / 2, maxSteps: 1e7,
    });
    return { wallMs: performance.now() - t0, rhs: r.rhsEvaluations, status: r.status };
  });
  const full = best(3, () => {
    const t0 = performance.now();
    const r = simulateMotion(params);
    return { wallMs: performance.now() - t0, rhs: r.rhsEvaluations, perPeriod: r.summary.rhsPerDrivePeriod, outcome: r.outcome };
  });
  const margins = best(1, () => {
    const t0 = performance.now();
    const f = floquetAnalysis(params);
    return { wallMs: performance.now() - t0, holds: f.uprightHolds, lower: f.amplitudeLimits.lower, upper: f.amplitudeLimits.upper };
  });
  console.log(`two-link benchmark (two-link-shaker, ${periods} drive periods, rtol ${params.run.rtol}, atol ${params.run.atol}):`);
  console.log(`  integrator only      ${bare.wallMs.toFixed(0)} ms (best of 3), ${bare.rhs} RHS evaluations = ${(bare.rhs / periods).toFixed(1)} per drive period (${bare.status})`);
  console.log(`  full motion run      ${full.wallMs.toFixed(0)} ms (best of 3), ${full.rhs} RHS evaluations = ${full.perPeriod.toFixed(1)} per drive period; outcome ${full.outcome}`);
  console.log(`  Floquet margins      ${margins.wallMs.toFixed(0)} ms; upright ${margins.holds ? 'holds' : 'lost'}, amplitude window ${((margins.lower ?? NaN) * 1000).toFixed(3)} to ${((margins.upper ?? NaN) * 1000).toFixed(3)} mm`);
}
