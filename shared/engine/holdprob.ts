/**
 * Probability of holding: how likely the upright holds when the case's fields vary within their tolerances and the
 * drive carries noise.
 *
 * Sampling. Samples come in blocks of HOLDPROB_BLOCK; each block is a Latin hypercube (McKay, Beckman & Conover,
 * Technometrics 21 (1979) 239-245, from memory) over the toleranced fields: every field's range of probability is cut
 * into as many equal strata as the block has samples, each stratum is used once, in an order shuffled independently
 * per field (Fisher-Yates), at a uniform point inside it. A stratum's probability u becomes a value by the inverse
 * distribution: nominal + sigma Phi^-1(u) (normal) or nominal + h (2u - 1) (uniform within +-h). All draws come from
 * one MT19937 stream (Matsumoto & Nishimura, ACM TOMACS 8 (1998) 3-30, from memory) seeded by the run's seed, so a
 * run is reproducible anywhere. Blocks are independent Latin hypercubes (replicated LHS), so a run that stops after a
 * whole block is still a set of complete hypercubes.
 *
 * Per sample. Tolerance part: the Floquet verdict of the upright at the sampled values (floquet.ts), and the margin
 * as the Margins tab computes it (the smaller of the amplitude and frequency margins, percent). Noise part: a full
 * motion run with the noisy drive (drive-noise.ts) whose outcome must be "holds upright"; each sample has its own
 * noise seed from the stream. Both parts: the sample holds when both do. A sample whose values leave the case's limits
 * (a normal tail below zero length, say) counts as not holding: the conservative reading for a sign-off.
 *
 * Estimate. p = k / n with the Wilson score interval at 95 % (E. B. Wilson, JASA 22 (1927) 209-212):
 * (p + z^2/2n +- z sqrt(p(1 - p)/n + z^2/4n^2)) / (1 + z^2/n), z = Phi^-1(0.975). The run stops early, between blocks,
 * when that interval is narrower than the target width. Independent blocks make the Wilson interval (built for
 * independent draws) conservative for monotone responses, where a Latin hypercube's variance is at most plain
 * sampling's (McKay et al. 1979).
 *
 * Sensitivity. Spearman's rank correlation (C. Spearman, Am. J. Psychol. 15 (1904) 72-101, from memory) of each
 * toleranced field's sampled values with the sample's margin (with the hold verdict when only noise decides): the
 * Pearson correlation of the average ranks (ties share their mean rank; ranks from @stdlib/stats-ranks). Ranked by
 * its size, largest first.
 */
import normalQuantile from '@stdlib/stats-base-dists-normal-quantile';
import ranks from '@stdlib/stats-ranks';
import type { CaseParams, Tolerance } from '../case/case-schema';
import { getField, setField } from '../case/case-fields';
import { parseCase } from '../case/validate';
import { driveLimits, uprightMotion } from './floquet';
import { EngineCancelledError, simulateMotion } from './motion';
import { steadyDrive } from './periodic-system';
import { mt19937Stream, type Mt19937 } from './seeded-random';
import type { ChunkHooks } from './sweep';
import { ENGINE_VERSION } from './version';

/** Which uncertainty a run samples: the tolerances (Floquet), the drive noise (motion runs), or both. */
export type HoldProbParts = 'tolerances' | 'noise' | 'both';

export interface HoldProbSpec {
  /** most samples */
  samples: number;
  sampler: 'latin-hypercube';
  /** MT19937 seed, 1 .. 2^32 - 1 */
  seed: number;
  /** stop once the 95 % interval is narrower than this (probability, 0..1); 0: never stop early */
  targetWidth: number;
  parts: HoldProbParts;
  /** relative tolerance of the Floquet limits */
  relTolerance: number;
}

/** Samples per Latin hypercube block; the early-stop check runs between blocks. */
export const HOLDPROB_BLOCK = 64;
/** Samples per task: fixed, so the split never depends on the pool. */
export const HOLDPROB_SAMPLES_PER_CHUNK = 8;
/** z of the two-sided 95 % interval. */
export const Z95 = normalQuantile(0.975, 0, 1);

/** The sampled values and noise seed of one sample. */
export interface HoldDraw {
  /** SI, one per varied field in the order of `variedTolerances` */
  values: number[];
  /** noise seed of this sample's motion run (0 when the noise part is off) */
  noiseSeed: number;
}

/** What one sample gave. */
export interface HoldSample {
  held: boolean;
  /** percent, the Margins tab's headline at the sampled values; null when no limit was found or Floquet was not run */
  margin: number | null;
  /** false when the sampled values left the case's limits (counted as not holding) */
  valid: boolean;
}

/** The tolerances a run varies: none when only the noise is sampled. */
export function variedTolerances(params: CaseParams, parts: HoldProbParts): Tolerance[] {
  return parts === 'noise' ? [] : [...(params.tolerances ?? [])];
}

/** The value of a tolerance at probability u in (0, 1). */
export function toleranceValue(t: Tolerance, nominal: number, u: number): number {
  if (t.distribution === 'uniform') return t.halfWidth === 0 ? nominal : nominal + t.halfWidth * (2 * u - 1);
  return t.sigma === 0 ? nominal : nominal + t.sigma * normalQuantile(u, 0, 1);
}

type Rand = Mt19937;

/** A Latin hypercube of n points in d dimensions, row-major u[i][j] in (0, 1). */
export function latinHypercube(rand: Rand, n: number, d: number): number[][] {
  const u = Array.from({ length: n }, () => new Array<number>(d).fill(0));
  for (let j = 0; j < d; j++) {
    const perm = Array.from({ length: n }, (_, i) => i);
    for (let i = n - 1; i > 0; i--) {
      const k = Math.floor(rand.normalized() * (i + 1));
      [perm[i], perm[k]] = [perm[k], perm[i]];
    }
    for (let i = 0; i < n; i++) {
      // inside the stratum, never on its ends (the normal quantile of 0 is -infinity)
      const v = (perm[i] + rand.normalized()) / n;
      u[i][j] = Math.min(Math.max(v, 1e-15), 1 - 1e-15);
    }
  }
  return u;
}

/** The draws of one block: a Latin hypercube over the varied tolerances, then one noise seed per sample. */
export function drawBlock(params: CaseParams, spec: HoldProbSpec, rand: Rand, n: number): HoldDraw[] {
  const tolerances = variedTolerances(params, spec.parts);
  const u = latinHypercube(rand, n, tolerances.length);
  const noisy = spec.parts !== 'tolerances' && params.noise !== undefined;
  return u.map((row) => ({
    values: row.map((p, j) => toleranceValue(tolerances[j], getField(params, tolerances[j].field), p)),
    // 1 .. 2^32 - 1, the seeds MT19937 accepts
    noiseSeed: noisy ? (rand() % 4294967295) + 1 : 0,
  }));
}

/** The case of one sample: the sampled values set, the sample's noise seed (or no noise), no tolerances left. */
export function sampleCase(params: CaseParams, spec: HoldProbSpec, draw: HoldDraw): CaseParams {
  const tolerances = variedTolerances(params, spec.parts);
  let c: CaseParams = { ...params, tolerances: undefined };
  tolerances.forEach((t, j) => {
    c = setField(c, t.field, draw.values[j]);
  });
  c = params.noise && spec.parts !== 'tolerances' ? { ...c, noise: { ...params.noise, seed: draw.noiseSeed } } : { ...c, noise: undefined };
  return c;
}

/** One sample: the Floquet verdict and margin (tolerance part) and the noisy motion run's outcome (noise part). */
export function holdSample(params: CaseParams, spec: HoldProbSpec, draw: HoldDraw, hooks: ChunkHooks = {}): HoldSample {
  const parsed = parseCase(sampleCase(params, spec, draw));
  if (!parsed.ok) return { held: false, margin: null, valid: false };
  const c = parsed.value;
  let held = true;
  let margin: number | null = null;
  if (spec.parts !== 'noise') {
    const steady = steadyDrive(c);
    const upright = uprightMotion(steady);
    held = upright !== null && upright.stable;
    const margins = [
      driveLimits(steady, 'drive.amplitude', spec.relTolerance).marginPercent,
      driveLimits(steady, 'drive.frequency', spec.relTolerance).marginPercent,
    ].filter((m): m is number => m !== null);
    margin = margins.length ? Math.min(...margins) : null;
  }
  if (spec.parts !== 'tolerances' && held) {
    held = simulateMotion(c, { shouldCancel: hooks.shouldCancel }).outcome === 'holds-upright';
  }
  return { held, margin, valid: true };
}

/** Samples of a chunk, one after another. */
export function holdSamples(params: CaseParams, spec: HoldProbSpec, draws: readonly HoldDraw[], hooks: ChunkHooks = {}): HoldSample[] {
  return draws.map((d, i) => {
    if (hooks.shouldCancel?.()) throw new EngineCancelledError();
    const s = holdSample(params, spec, d, hooks);
    hooks.onProgress?.((i + 1) / draws.length);
    return s;
  });
}

/** Wilson score interval of k successes in n trials at the given z (95 %: Z95). */
export function wilsonInterval(k: number, n: number, z = Z95): { lower: number; upper: number } {
  if (n === 0) return { lower: 0, upper: 1 };
  const p = k / n;
  const z2 = z * z;
  const denom = 1 + z2 / n;
  const centre = (p + z2 / (2 * n)) / denom;
  const half = (z / denom) * Math.sqrt((p * (1 - p)) / n + z2 / (4 * n * n));
  // At k = 0 (k = n) the lower (upper) end is exactly 0 (1); rounding would leave a few ulps.
  return { lower: k === 0 ? 0 : Math.max(0, centre - half), upper: k === n ? 1 : Math.min(1, centre + half) };
}

/** Spearman's rank correlation; null when either variable is constant. */
export function spearman(x: ArrayLike<number>, y: ArrayLike<number>): number | null {
  // stdlib's ranks: 1-based, ties share their mean rank ('average'); infinities rank as numbers
  const rx = ranks(Array.from(x), { method: 'average' });
  const ry = ranks(Array.from(y), { method: 'average' });
  const n = rx.length;
  if (n < 2) return null;
  const mean = (n + 1) / 2;
  let sxy = 0;
  let sxx = 0;
  let syy = 0;
  for (let i = 0; i < n; i++) {
    sxy += (rx[i] - mean) * (ry[i] - mean);
    sxx += (rx[i] - mean) ** 2;
    syy += (ry[i] - mean) ** 2;
  }
  return sxx === 0 || syy === 0 ? null : sxy / Math.sqrt(sxx * syy);
}

/** Counts of finite values in equal bins between their least and greatest (20 bins; one when all are equal). */
export function histogram(values: ArrayLike<number>, bins = 20): { edges: Float64Array; counts: Float64Array } {
  const finite = Array.from(values).filter((v) => Number.isFinite(v));
  if (finite.length === 0) return { edges: new Float64Array(0), counts: new Float64Array(0) };
  const lo = Math.min(...finite);
  const hi = Math.max(...finite);
  if (lo === hi) return { edges: Float64Array.of(lo - 0.5, hi + 0.5), counts: Float64Array.of(finite.length) };
  const width = (hi - lo) / bins;
  const edges = Float64Array.from({ length: bins + 1 }, (_, i) => (i === bins ? hi : lo + i * width));
  const counts = new Float64Array(bins);
  for (const v of finite) counts[Math.min(bins - 1, Math.floor((v - lo) / width))]++;
  return { edges, counts };
}

export type HoldProbStop = 'target-width' | 'all-samples';

/** One toleranced field's influence. */
export interface HoldSensitivity {
  field: string;
  /** Spearman rank correlation with the margin (or the hold verdict); null when the field did not vary */
  rankCorrelation: number | null;
}

export interface HoldProbResult {
  engineVersion: string;
  parts: HoldProbParts;
  sampler: 'latin-hypercube';
  seed: number;
  samplesRequested: number;
  samplesUsed: number;
  held: number;
  /** samples whose values left the case's limits (counted as not holding) */
  invalid: number;
  probability: number;
  /** Wilson 95 % interval */
  interval: { lower: number; upper: number; confidence: number };
  targetWidth: number;
  stopped: HoldProbStop;
  tolerances: Tolerance[];
  /** per varied field, its sampled values (SI), in sample order */
  values: Float64Array[];
  /** per sample: margin percent (NaN: none), 1 when held, the noise seed (0: none) */
  margin: Float64Array;
  heldBySample: Float64Array;
  noiseSeeds: Float64Array;
  /** largest |rank correlation| first */
  ranking: HoldSensitivity[];
  /** of the finite margins, percent */
  histogram: { edges: Float64Array; counts: Float64Array };
}

/** The run's result from its draws and samples, in sample order. */
export function assembleHoldProb(
  params: CaseParams, spec: HoldProbSpec, draws: readonly HoldDraw[], samples: readonly HoldSample[], stopped: HoldProbStop,
): HoldProbResult {
  const tolerances = variedTolerances(params, spec.parts);
  const n = samples.length;
  const held = samples.filter((s) => s.held).length;
  const interval = wilsonInterval(held, n);
  const margin = Float64Array.from(samples, (s) => s.margin ?? NaN);
  const heldBySample = Float64Array.from(samples, (s) => (s.held ? 1 : 0));
  const values = tolerances.map((_, j) => Float64Array.from(draws, (d) => d.values[j]));
  // Score for the ranking: the margin; a sample without one sorts by its verdict (above every margin when held).
  const score = spec.parts === 'noise'
    ? heldBySample
    : Float64Array.from(samples, (s) => s.margin ?? (s.held ? Infinity : -Infinity));
  const ranking = tolerances
    .map((t, j) => ({ field: t.field, rankCorrelation: spearman(values[j], score) }))
    .sort((a, b) => Math.abs(b.rankCorrelation ?? 0) - Math.abs(a.rankCorrelation ?? 0));
  return {
    engineVersion: ENGINE_VERSION,
    parts: spec.parts,
    sampler: spec.sampler,
    seed: spec.seed,
    samplesRequested: spec.samples,
    samplesUsed: n,
    held,
    invalid: samples.filter((s) => !s.valid).length,
    probability: n ? held / n : 0,
    interval: { ...interval, confidence: 0.95 },
    targetWidth: spec.targetWidth,
    stopped,
    tolerances,
    values,
    margin,
    heldBySample,
    noiseSeeds: Float64Array.from(draws, (d) => d.noiseSeed),
    ranking,
    histogram: histogram(margin),
  };
}

/** A new MT19937 stream for a run. */
export function holdProbStream(seed: number): Rand {
  return mt19937Stream(seed);
}
