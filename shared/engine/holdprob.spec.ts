import { describe, expect, it } from 'vitest';
import { templateCase } from '../case/templates';
import { parseCase } from '../case/validate';
import { caseDigest } from '../case/canonical';
import { drawBlock, histogram, holdProbStream, latinHypercube, sampleCase, spearman, wilsonInterval, type HoldProbSpec } from './holdprob';
import { computeRun, parseRunSettings, parseRunSettingsFor } from './run-kinds';

const spec: HoldProbSpec = { samples: 16, sampler: 'latin-hypercube', seed: 7, targetWidth: 0, parts: 'tolerances', relTolerance: 1e-3 };

describe('hold probability pieces', () => {
  it('a Latin hypercube uses every stratum of every dimension once', () => {
    const u = latinHypercube(holdProbStream(3), 10, 3);
    for (let j = 0; j < 3; j++) {
      expect(u.map((r) => Math.floor(r[j] * 10)).sort((a, b) => a - b)).toEqual([0, 1, 2, 3, 4, 5, 6, 7, 8, 9]);
    }
  });

  it('draws are reproducible from the seed', () => {
    const p = { ...templateCase(), tolerances: [{ field: 'drive.amplitude', distribution: 'normal' as const, sigma: 1e-4 }] };
    expect(drawBlock(p, spec, holdProbStream(9), 8)).toEqual(drawBlock(p, spec, holdProbStream(9), 8));
  });

  it('sampled cases carry no tolerances and the sample values', () => {
    const p = { ...templateCase(), tolerances: [{ field: 'drive.frequency', distribution: 'uniform' as const, halfWidth: 2 }] };
    const c = sampleCase(p, spec, { values: [41], noiseSeed: 0 });
    expect(c.drive.frequency).toBe(41);
    expect(c.tolerances).toBeUndefined();
  });

  it('ranks share ties; Spearman is 1 for a monotone relation and null for a constant', () => {
    // ties share their mean rank: ranks 1.5, 1.5, 3.5, 3.5 against 1..4 give 4 / sqrt(20)
    expect(spearman([1, 2, 3, 4], [0, 0, 1, 1])).toBeCloseTo(0.894427191, 8);
    expect(spearman([1, 2, 3, 4], [1, 8, 27, 64])).toBeCloseTo(1, 12);
    expect(spearman([1, 2, 3, 4], [4, 3, 2, 1])).toBeCloseTo(-1, 12);
    expect(spearman([1, 1, 1], [1, 2, 3])).toBeNull();
  });

  it('the histogram counts every finite value once', () => {
    const h = histogram([1, 2, 3, NaN, 4, 5], 4);
    expect(Array.from(h.counts).reduce((a, b) => a + b, 0)).toBe(5);
    expect(h.edges[0]).toBe(1);
    expect(h.edges[4]).toBe(5);
  });

  it('Wilson interval stays inside [0, 1] and contains the estimate', () => {
    for (const [k, n] of [[0, 10], [10, 10], [3, 7]]) {
      const { lower, upper } = wilsonInterval(k, n);
      expect(lower).toBeGreaterThanOrEqual(0);
      expect(upper).toBeLessThanOrEqual(1);
      expect(lower).toBeLessThanOrEqual(k / n);
      expect(upper).toBeGreaterThanOrEqual(k / n);
    }
  });
});

describe('case tolerances and noise', () => {
  it('an old case without them keeps its digest', () => {
    const p = templateCase();
    const parsed = parseCase(p);
    expect(parsed.ok && caseDigest(parsed.value)).toBe(caseDigest(p));
  });

  it('refuses a tolerance on a field the case lacks, naming it', () => {
    const r = parseCase({ ...templateCase(), tolerances: [{ field: 'body.rodLength', distribution: 'normal', sigma: 1e-3 }] });
    expect(r.ok).toBe(false);
    if (!r.ok) expect(r.issues[0].field).toBe('tolerances.0.field');
  });

  it('refuses a noise bandwidth far above the drive frequency', () => {
    const r = parseCase({ ...templateCase(), noise: { kind: 'phase-jitter', rms: 0.1, bandwidth: 5000, seed: 1 } });
    expect(r.ok).toBe(false);
    if (!r.ok) expect(r.issues[0].field).toBe('noise.bandwidth');
  });
});

describe('the holdprob run kind', () => {
  it('settings are strict', () => {
    const ok = parseRunSettings({ kind: 'holdprob', samples: 64, sampler: 'latin-hypercube', seed: 1, targetWidth: 0.1, parts: 'tolerances', relTolerance: 1e-4 });
    expect(ok.ok).toBe(true);
    const bad = parseRunSettings({ kind: 'holdprob', samples: 1e6, sampler: 'latin-hypercube', seed: 1, targetWidth: 0.1, parts: 'tolerances', relTolerance: 1e-4 });
    expect(bad.ok).toBe(false);
    if (!bad.ok) expect(bad.field).toBe('samples');
  });

  it('needs the tolerances or the drive noise it samples, naming parts', () => {
    const settings = { kind: 'holdprob', samples: 64, sampler: 'latin-hypercube', seed: 1, targetWidth: 0.1, parts: 'tolerances', relTolerance: 1e-4 };
    const bare = parseRunSettingsFor(templateCase(), settings);
    expect(bare.ok).toBe(false);
    if (!bare.ok) expect([bare.field, bare.message]).toEqual(['parts', 'this case has no tolerances']);
    const toleranced = { ...templateCase(), tolerances: [{ field: 'drive.amplitude', distribution: 'normal' as const, sigma: 1e-4 }] };
    expect(parseRunSettingsFor(toleranced, settings).ok).toBe(true);
    const both = parseRunSettingsFor(toleranced, { ...settings, parts: 'both' });
    expect(!both.ok && both.message).toBe('this case has no drive noise');
  });

  it('stops early, between blocks, once the interval is narrow enough', () => {
    // No tolerances: every sample is the nominal case, which holds, so one block of 64 gives an interval under 0.1.
    const r = computeRun(templateCase(), { kind: 'holdprob', samples: 256, sampler: 'latin-hypercube', seed: 1, targetWidth: 0.1, parts: 'tolerances', relTolerance: 1e-2 });
    if (r.kind !== 'holdprob') throw new Error('kind');
    expect(r.value.samplesUsed).toBe(64);
    expect(r.value.stopped).toBe('target-width');
    expect(r.value.probability).toBe(1);
  }, 120_000);
});
