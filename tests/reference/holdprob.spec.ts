/**
 * Hold probability against independent figures: the Wilson interval against its textbook formula and published
 * examples, the zero-tolerance run against the Margins run, and a normal amplitude tolerance near the lower limit
 * against the normal CDF of the distance to the Floquet limit.
 */
import normalCdf from '@stdlib/stats-base-dists-normal-cdf';
import { describe, expect, it } from 'vitest';
import { templateCase } from '../../shared/case/templates';
import { driveLimits } from '../../shared/engine/floquet';
import { wilsonInterval, Z95 } from '../../shared/engine/holdprob';
import { computeRun } from '../../shared/engine/run-kinds';

describe('Wilson score interval (E. B. Wilson, JASA 22 (1927) 209-212)', () => {
  it('matches the textbook formula (p + z²/2n ± z √(p(1−p)/n + z²/4n²)) / (1 + z²/n)', () => {
    for (const [k, n] of [[3, 17], [40, 50], [120, 256]]) {
      const p = k / n;
      const z = 1.959963984540054;
      const c = (p + (z * z) / (2 * n)) / (1 + (z * z) / n);
      const h = (z * Math.sqrt((p * (1 - p)) / n + (z * z) / (4 * n * n))) / (1 + (z * z) / n);
      const w = wilsonInterval(k, n);
      expect(w.lower).toBeCloseTo(c - h, 14);
      expect(w.upper).toBeCloseTo(c + h, 14);
    }
    expect(Z95).toBeCloseTo(1.959963984540054, 12);
  });

  // Newcombe, Stat. Med. 17 (1998) 857-872, table I, the score method (from memory; 0/20 also follows in closed form:
  // upper = z²/(n + z²)).
  it.each([
    [81, 263, 0.2553, 0.3662],
    [15, 148, 0.0624, 0.1605],
    [0, 20, 0, 0.1611],
    [1, 29, 0.0061, 0.1718],
  ])('%i of %i: %f to %f (Newcombe 1998, from memory)', (k, n, lo, hi) => {
    const w = wilsonInterval(k, n);
    expect(w.lower).toBeCloseTo(lo, 4);
    expect(w.upper).toBeCloseTo(hi, 4);
  });
});

describe('probability of holding against the Floquet limits', () => {
  it('with zero tolerances the probability is 0 or 1 and agrees with margins', () => {
    const settings = { kind: 'holdprob', samples: 16, sampler: 'latin-hypercube', seed: 5, targetWidth: 0, parts: 'tolerances', relTolerance: 1e-3 } as const;
    for (const amplitude of [0.01, 0.006]) {
      const base = templateCase();
      const params = {
        ...base, drive: { ...base.drive, amplitude },
        tolerances: [{ field: 'drive.amplitude', distribution: 'normal' as const, sigma: 0 }, { field: 'damping.viscousRatio', distribution: 'uniform' as const, halfWidth: 0 }],
      };
      const margins = computeRun(params, { kind: 'margins', relTolerance: 1e-6 });
      const hold = computeRun(params, settings);
      if (margins.kind !== 'margins' || hold.kind !== 'holdprob') throw new Error('kind');
      expect(hold.value.probability).toBe(margins.value.uprightHolds ? 1 : 0);
      expect([0, 1]).toContain(hold.value.probability);
    }
  }, 300_000);

  // P(hold) = P(a > a_lo) = Phi((a0 - a_lo) / sigma) when the upper limit is far (it is 11 times a_lo here).
  it('a normal amplitude tolerance near the lower limit: P agrees with the normal CDF of the distance to the limit', () => {
    const base = templateCase();
    const lower = driveLimits(base, 'drive.amplitude', 1e-8).lower;
    if (lower === null) throw new Error('no lower limit');
    const sigma = 1e-4;
    const a0 = lower + 0.8 * sigma;
    const expected = normalCdf((a0 - lower) / sigma, 0, 1);
    const params = { ...base, drive: { ...base.drive, amplitude: a0 }, tolerances: [{ field: 'drive.amplitude', distribution: 'normal' as const, sigma }] };
    const r = computeRun(params, { kind: 'holdprob', samples: 128, sampler: 'latin-hypercube', seed: 11, targetWidth: 0, parts: 'tolerances', relTolerance: 1e-3 });
    if (r.kind !== 'holdprob') throw new Error('kind');
    expect(r.value.interval.lower).toBeLessThanOrEqual(expected);
    expect(r.value.interval.upper).toBeGreaterThanOrEqual(expected);
    expect(r.value.ranking[0].field).toBe('drive.amplitude');
    expect(r.value.ranking[0].rankCorrelation).toBeGreaterThan(0.9);
  }, 600_000);
});
