import { describe, expect, it } from 'vitest';
import type { StabilityChart } from '../../shared/engine/chart';
import { resultDigest, type RunResult } from '../../shared/engine/run-record';
import type { HoldProbResult } from '../../shared/engine/holdprob';
import type { LeanestResult } from '../../shared/engine/leanest';
import { MAX_CHART_COUNT, MAX_HOLDPROB_SAMPLES, MAX_LEANEST_COUNT, MAX_MAP_COUNT, MAX_SWEEP_STEPS } from '../../shared/engine/run-kinds';
import { MAX_TOLERANCES } from '../../shared/case/case-schema';
import type { CellMap, MapCell, SweepPoint, SweepResult } from '../../shared/engine/sweep';
import { ENGINE_VERSION } from '../../shared/engine/version';
import {
  RESULT_MAX_COMPRESSED_BYTES, RESULT_MAX_RAW_BYTES, ResultTooLargeError, compressResult, decompressResult,
} from './result-store';

// Full-entropy doubles: the worst case for compression, so a size that fits here fits for any real result.
let seed = 12345;
function noise(): number {
  seed = (seed * 1103515245 + 12345) % 2147483648;
  return seed / 2147483648 - 0.5 + Math.sin(seed) * 1e-9;
}

function chartOf(n: number): RunResult {
  const axis = (field: string) => ({ field, from: 1, to: 2, count: n });
  const value: StabilityChart = {
    engineVersion: ENGINE_VERSION,
    grid: { x: axis('drive.frequency'), y: axis('drive.amplitude') },
    xValues: Float64Array.from({ length: n }, noise),
    yValues: Float64Array.from({ length: n }, noise),
    maxMultiplier: Float64Array.from({ length: n * n }, noise),
    caseMark: { x: 1.5, y: 1.5, maxMultiplier: 0.9 },
    averagedLowerLimit: null,
  } as StabilityChart;
  return { kind: 'chart', value };
}

function sweepOf(steps: number): RunResult {
  const points: SweepPoint[] = Array.from({ length: steps }, (_, index) => ({
    index, value: noise(), outcome: index % 3 === 0 ? 'falls' : 'holds-upright', meanAngle: noise(), maxDeviation: noise(), slowFrequencyHz: noise(), maxMultiplier: index % 7 === 0 ? Infinity : noise(),
  }));
  const value: SweepResult = {
    engineVersion: ENGINE_VERSION,
    field: 'drive.amplitude',
    spec: { field: 'drive.amplitude', from: 0, to: 1, steps },
    values: Float64Array.from(points, (p) => p.value),
    points,
    thresholds: [{ kind: 'outcome', value: 0.5, bracket: [0.49, 0.51], tolerance: 0.02, below: 'falls', above: 'holds-upright' }],
  };
  return { kind: 'sweep', value };
}

/** An outcome map with every cell's numbers filled (the basin map's cells are the same shape). */
function mapOf(n: number): RunResult {
  const axis = (field: string) => ({ field, from: 1, to: 2, count: n });
  const outcomes = ['holds-upright', 'falls', 'tumbles', 'settles-tilted', 'irregular'] as const;
  const cells: MapCell[] = Array.from({ length: n * n }, (_, i) => ({
    outcome: outcomes[i % outcomes.length], meanAngle: noise(), maxDeviation: noise(), slowFrequencyHz: i % 11 === 0 ? null : noise(),
  }));
  const value = {
    engineVersion: ENGINE_VERSION,
    grid: { x: axis('drive.frequency'), y: axis('drive.amplitude') },
    xValues: Float64Array.from({ length: n }, noise),
    yValues: Float64Array.from({ length: n }, noise),
    cells,
  } as CellMap;
  return { kind: 'map', value };
}

/** A leanest-drive result: its chart, per-column limits, admissible cells and an optimum with every constraint. */
function leanestOf(n: number): RunResult {
  const chart = chartOf(n).value as StabilityChart;
  const column = () => Float64Array.from({ length: n }, noise);
  const value: LeanestResult = {
    engineVersion: ENGINE_VERSION,
    marginPercent: 15,
    cost: 'acceleration',
    chart,
    columns: { frequency: column(), lower: column(), upper: column(), amplitude: column(), cost: column() },
    feasible: Float64Array.from({ length: n * n }, (_, i) => i % 2),
    optimum: {
      frequency: noise(), amplitude: noise(), cost: noise(), peakAcceleration: noise(), peakVelocity: noise(), stroke: noise(),
      force: noise(), power: noise(), pivotForcePeak: noise(), lowerLimit: noise(), upperLimit: noise(),
      amplitudeMarginPercent: 15, frequencyLimits: { lower: noise(), upper: null }, frequencyMarginPercent: noise(), marginPercent: 15,
      binding: ['lower-margin', 'upper-margin'],
      constraints: Array.from({ length: 13 }, () => ({ constraint: 'stroke' as const, sense: 'at-most' as const, value: noise(), limit: noise(), slack: noise() })),
      found: 'edge',
    },
  };
  return { kind: 'leanest', value };
}

/** A hold probability at its most samples and tolerances: every sample's values, margin, verdict and noise seed. */
function holdprobOf(n: number, d: number): RunResult {
  const column = () => Float64Array.from({ length: n }, noise);
  const tolerances = Array.from({ length: d }, () => ({ field: 'drive.amplitude', distribution: 'normal' as const, sigma: noise() }));
  const value: HoldProbResult = {
    engineVersion: ENGINE_VERSION, parts: 'both', sampler: 'latin-hypercube', seed: 4294967295, samplesRequested: n,
    samplesUsed: n, held: n / 2, invalid: 0, probability: 0.5, interval: { lower: 0.48, upper: 0.52, confidence: 0.95 },
    targetWidth: 0, stopped: 'all-samples', tolerances, values: tolerances.map(column), margin: column(),
    heldBySample: Float64Array.from({ length: n }, (_, i) => i % 2), noiseSeeds: Float64Array.from({ length: n }, () => Math.floor(4e9 * Math.abs(noise()))),
    ranking: tolerances.map((t) => ({ field: t.field, rankCorrelation: noise() })),
    histogram: { edges: Float64Array.from({ length: 21 }, noise), counts: Float64Array.from({ length: 20 }, noise) },
  };
  return { kind: 'holdprob', value };
}

describe('the run registry and the stored-result limits agree', () => {
  // A run the registry accepts must be storable: the largest of each kind fits both size limits.
  it.each([
    [`a ${MAX_SWEEP_STEPS}-point sweep`, () => sweepOf(MAX_SWEEP_STEPS)],
    [`a ${MAX_CHART_COUNT}x${MAX_CHART_COUNT} chart`, () => chartOf(MAX_CHART_COUNT)],
    [`a ${MAX_MAP_COUNT}x${MAX_MAP_COUNT} outcome map`, () => mapOf(MAX_MAP_COUNT)],
    [`a ${MAX_LEANEST_COUNT}x${MAX_LEANEST_COUNT} leanest-drive search`, () => leanestOf(MAX_LEANEST_COUNT)],
    [`a ${MAX_HOLDPROB_SAMPLES}-sample hold probability over ${MAX_TOLERANCES} tolerances`, () => holdprobOf(MAX_HOLDPROB_SAMPLES, MAX_TOLERANCES)],
  ])('stores %s, the largest the registry accepts', (_name, make) => {
    const stored = compressResult(make());
    expect(stored.rawBytes).toBeLessThan(RESULT_MAX_RAW_BYTES);
    expect(stored.compressedBytes).toBeLessThan(RESULT_MAX_COMPRESSED_BYTES);
  });
});

describe('stored result size and round trip', () => {
  it(`keeps a ${MAX_CHART_COUNT}x${MAX_CHART_COUNT} chart within the limits, bit for bit`, () => {
    const chart = chartOf(MAX_CHART_COUNT);
    const stored = compressResult(chart);
    expect(stored.rawBytes).toBeLessThan(RESULT_MAX_RAW_BYTES);
    expect(stored.compressedBytes).toBeLessThan(RESULT_MAX_COMPRESSED_BYTES);
    expect(stored.compressedBytes).toBe(stored.compressed.length);
    const back = decompressResult(stored);
    if (back.kind !== 'chart' || chart.kind !== 'chart') throw new Error('kind lost');
    expect(Buffer.from(back.value.maxMultiplier.buffer).equals(Buffer.from(chart.value.maxMultiplier.buffer))).toBe(true);
    expect(resultDigest(back)).toBe(resultDigest(chart));
  });

  it('keeps a 200-point sweep within the limits with its infinite multipliers', () => {
    const sweep = sweepOf(200);
    const stored = compressResult(sweep);
    expect(stored.rawBytes).toBeLessThan(RESULT_MAX_RAW_BYTES);
    expect(stored.compressedBytes).toBeLessThan(stored.rawBytes);
    const back = decompressResult(stored);
    if (back.kind !== 'sweep') throw new Error('kind lost');
    expect(back.value.points[0]?.maxMultiplier).toBe(Infinity);
    expect(resultDigest(back)).toBe(resultDigest(sweep));
  });

  it('refuses a result over either limit, naming its size', () => {
    const chart = chartOf(50);
    const { rawBytes, compressedBytes } = compressResult(chart);
    expect(() => compressResult(chart, { maxRawBytes: rawBytes - 1, maxCompressedBytes: RESULT_MAX_COMPRESSED_BYTES })).toThrow(ResultTooLargeError);
    expect(() => compressResult(chart, { maxRawBytes: rawBytes, maxCompressedBytes: compressedBytes - 1 })).toThrow(
      `the result is ${compressedBytes} bytes compressed, over the ${compressedBytes - 1}-byte limit`,
    );
  });

  it('refuses an unknown encoding', () => {
    expect(() => decompressResult({ encoding: 'other/1', compressed: Buffer.alloc(0) })).toThrow(/unknown result encoding/);
  });
});
