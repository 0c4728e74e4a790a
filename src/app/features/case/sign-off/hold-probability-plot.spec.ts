import { describe, expect, it } from 'vitest';

import { templateCase } from '../../../../../shared/case/templates';
import type { HoldProbResult } from '../../../../../shared/engine/holdprob';
import { computeRun } from '../../../../../shared/engine/run-kinds';
import { DEFAULT_UNITS } from '../../../core/units/display-units';
import { spreadText } from './hold-probability-panel';
import { holdProbabilityPlot } from './hold-probability-plot';

function run(): HoldProbResult {
  const c = { ...templateCase(), tolerances: [{ field: 'drive.amplitude', distribution: 'normal' as const, sigma: 2e-3 }] };
  const r = computeRun(c, { kind: 'holdprob', samples: 16, sampler: 'latin-hypercube', seed: 3, targetWidth: 0, parts: 'tolerances', relTolerance: 1e-3 });
  if (r.kind !== 'holdprob') throw new Error('not a hold probability');
  return r.value;
}

describe('hold probability plot and words', () => {
  it('splits the histogram at zero margin and exports every bin', () => {
    const r = run();
    const p = holdProbabilityPlot(r);
    if (!p) throw new Error('no plot');
    const bars = p.data.map((t) => (t['y'] as number[]).reduce((a, b) => a + b, 0));
    expect(bars[0] + bars[1]).toBe(r.margin.filter((m) => Number.isFinite(m)).length);
    expect(p.csv.rows).toHaveLength(r.histogram.counts.length);
    expect(p.csv.columns[0]).toEqual({ header: 'margin from', unit: '%' });
  }, 60_000);

  it('reads a spread in the field\'s display unit', () => {
    expect(spreadText({ field: 'drive.amplitude', distribution: 'normal', sigma: 2e-3 }, DEFAULT_UNITS)).toBe('σ 2 mm');
    expect(spreadText({ field: 'drive.frequency', distribution: 'uniform', halfWidth: 2 }, DEFAULT_UNITS)).toBe('± 2 Hz');
    expect(spreadText({ field: 'damping.viscousRatio', distribution: 'uniform', halfWidth: 0.005 }, DEFAULT_UNITS)).toBe('± 0.005');
  });
});
