import { lastValueFrom } from 'rxjs';
import { describe, expect, it } from 'vitest';
import { demoRigCase, templateCase, type CaseParams } from '../case';
import { handleEngineRequest } from '../compute/handle-request';
import { WorkerPool, type WorkerLike } from '../compute/worker-pool';
import { axisValues, stabilityChart } from './chart';
import { assembleHoldProb, drawBlock, holdProbStream, holdSamples } from './holdprob';
import { assembleLeanest, leanestColumns, leanestEdgeFrequencies, leanestRefine } from './leanest';
import { floquetAnalysis } from './floquet';
import { simulateMotion } from './motion';
import { resultDigest } from './run-record';
import {
  computeRun, defaultRunSettings, MAX_CHART_COUNT, MAX_MAP_COUNT, MAX_SWEEP_STEPS, parseRunSettings, parseRunSettingsFor,
  holdProbSpecOf, leanestSpecOf, RUN_KINDS, type RunKind, type RunResult, type RunSettings,
} from './run-kinds';
import {
  assembleCellMap, assembleSweep, basinMapRows, outcomeMapRows, sweepPoints, sweepThresholds, thresholdBrackets,
} from './sweep';

function shortCase(): CaseParams {
  const c = templateCase();
  return {
    ...c, run: { ...c.run, duration: 2, outputPoints: 200 },
    // used by the hold probability only (other kinds ignore them)
    tolerances: [
      { field: 'drive.amplitude', distribution: 'normal', sigma: 5e-4 },
      { field: 'body.length', distribution: 'uniform', halfWidth: 2e-3 },
    ],
    noise: { kind: 'amplitude', density: 1e-10, bandwidth: 100, seed: 1 },
  };
}

/** Each kind's default settings for the case, made small enough for a unit test. */
function smallSettings(kind: RunKind, c: CaseParams): RunSettings {
  const s = defaultRunSettings(kind, c);
  if (s.kind === 'sweep') return { ...s, spec: { ...s.spec, steps: 5 } };
  if (s.kind === 'chart') return { ...s, grid: { x: { ...s.grid.x, count: 12 }, y: { ...s.grid.y, count: 10 } } };
  if (s.kind === 'map') return { ...s, grid: { x: { ...s.grid.x, count: 3 }, y: { ...s.grid.y, count: 3 } } };
  if (s.kind === 'basin') return { ...s, grid: { x: { ...s.grid.x, count: 3 }, y: { ...s.grid.y, count: 3 } } };
  // Nine columns (three tasks of four and one of one) and an envelope end inside the range (an extra task).
  if (s.kind === 'leanest') {
    return {
      ...s, relTolerance: 1e-4, envelope: { kind: 'shaker', minFrequency: 1.1 * s.grid.x.from },
      grid: { x: { ...s.grid.x, count: 9 }, y: { ...s.grid.y, count: 5 } },
    };
  }
  // Two tasks of 8 samples, one block, tolerances and noise.
  if (s.kind === 'holdprob') return { ...s, samples: 16, targetWidth: 0, relTolerance: 1e-3 };
  return s;
}

/**
 * The same run through the engine's own functions, composed as the code before the registry did in computeRun, so
 * the registry's jobs are checked against an independent composition of the same engine.
 */
function directRun(c: CaseParams, s: RunSettings): RunResult {
  switch (s.kind) {
    case 'motion':
      return { kind: 'motion', value: simulateMotion(c) };
    case 'margins':
      return { kind: 'margins', value: floquetAnalysis(c, { relTolerance: s.relTolerance }) };
    case 'sweep': {
      const points = sweepPoints(c, s.spec, 0, s.spec.steps);
      return { kind: 'sweep', value: assembleSweep(s.spec, points, sweepThresholds(c, s.spec, thresholdBrackets(points))) };
    }
    case 'chart':
      return { kind: 'chart', value: stabilityChart(c, s.grid) };
    case 'map':
      return { kind: 'map', value: assembleCellMap(s.grid, outcomeMapRows(c, s.grid, 0, s.grid.y.count)) };
    case 'basin':
      return { kind: 'basin', value: assembleCellMap(s.grid, basinMapRows(c, s.grid, 0, s.grid.y.count)) };
    case 'leanest': {
      const spec = leanestSpecOf(s);
      const columns = leanestColumns(c, spec, Array.from(axisValues(s.grid.x)), axisValues(s.grid.y));
      const extra = leanestColumns(c, spec, leanestEdgeFrequencies(c, spec), null).points;
      const optimum = leanestRefine(c, spec, [...columns.points, ...extra]);
      return { kind: 'leanest', value: assembleLeanest(spec, stabilityChart(c, s.grid), columns.points, columns.cells, optimum) };
    }
    case 'holdprob': {
      const spec = holdProbSpecOf(s);
      const draws = drawBlock(c, spec, holdProbStream(spec.seed), spec.samples);
      return { kind: 'holdprob', value: assembleHoldProb(c, spec, draws, holdSamples(c, spec, draws), 'all-samples') };
    }
  }
}

/** The real request handler on this thread, answering asynchronously like a worker. */
function inThreadWorker(): WorkerLike {
  const w: WorkerLike = {
    onmessage: null,
    onerror: null,
    postMessage: (message) => setTimeout(() => handleEngineRequest(message, (response) => w.onmessage?.({ data: response })), 0),
    terminate: () => undefined,
  };
  return w;
}

describe('run registry: one job per kind', () => {
  const c = shortCase();
  const pool = new WorkerPool(inThreadWorker, 2);

  it.each(RUN_KINDS)('computes a %s run with the digest of the direct engine composition, in this thread and on a pool', async (kind) => {
    const settings = smallSettings(kind, c);
    const inThread = computeRun(c, settings);
    const direct = directRun(c, settings);
    expect(inThread.kind).toBe(kind);
    expect(resultDigest(inThread)).toBe(resultDigest(direct));
    const last = await lastValueFrom(pool.run(c, settings));
    if (last.type !== 'result') throw new Error('no result');
    expect(resultDigest(last.value)).toBe(resultDigest(direct));
  }, 120_000);

  it('reports in-thread progress that rises to 1 across the sweep\'s two stages', () => {
    const seen: number[] = [];
    computeRun(c, smallSettings('sweep', c), { onProgress: (f) => seen.push(f) });
    for (let i = 1; i < seen.length; i++) expect(seen[i]).toBeGreaterThanOrEqual(seen[i - 1]);
    expect(seen.some((f) => f > 0 && f < 0.7)).toBe(true);
    expect(seen[seen.length - 1]).toBeCloseTo(1, 12);
  }, 60_000);
});

describe('run settings schema', () => {
  const c = templateCase();
  const leanestBase = () => defaultRunSettings('leanest', c);

  it.each(RUN_KINDS)('accepts the default %s settings', (kind) => {
    expect(parseRunSettings(defaultRunSettings(kind, c))).toEqual({ ok: true, value: defaultRunSettings(kind, c) });
  });

  it.each([
    ['an unknown key', { kind: 'motion', extra: 1 }, '', /extra/],
    ['an unknown kind', { kind: 'poincare' }, 'kind', /.+/],
    ['an unknown key inside a sweep spec', { kind: 'sweep', spec: { field: 'drive.amplitude', from: 0.001, to: 0.01, steps: 5, depth: [] } }, 'spec', /depth/],
    ['a million sweep steps', { kind: 'sweep', spec: { field: 'drive.amplitude', from: 0.001, to: 0.01, steps: 1e6 } }, 'spec.steps', new RegExp(`${MAX_SWEEP_STEPS}`)],
    ['fractional sweep steps', { kind: 'sweep', spec: { field: 'drive.amplitude', from: 0.001, to: 0.01, steps: 4.5 } }, 'spec.steps', /whole/],
    ['a sweep that does not move', { kind: 'sweep', spec: { field: 'drive.amplitude', from: 0.01, to: 0.01, steps: 5 } }, 'spec.to', /differ/],
    ['a field that is not sweepable', { kind: 'sweep', spec: { field: 'run.duration', from: 1, to: 2, steps: 5 } }, 'spec.field', /one of/],
    ['a log sweep through zero', { kind: 'sweep', spec: { field: 'start.angle', from: -1, to: 1, steps: 5, scale: 'log' } }, 'spec.from', /above zero/],
    [`a chart beyond ${MAX_CHART_COUNT} x ${MAX_CHART_COUNT}`, { kind: 'chart', grid: { x: { field: 'drive.frequency', from: 10, to: 20, count: MAX_CHART_COUNT + 1 }, y: { field: 'drive.amplitude', from: 0.001, to: 0.01, count: 10 } } }, 'grid.x.count', new RegExp(`${MAX_CHART_COUNT}`)],
    ['a map beyond its limit', { kind: 'map', grid: { x: { field: 'drive.frequency', from: 10, to: 20, count: 3 }, y: { field: 'drive.amplitude', from: 0.001, to: 0.01, count: MAX_MAP_COUNT + 1 } } }, 'grid.y.count', new RegExp(`${MAX_MAP_COUNT}`)],
    ['a map over one field twice', { kind: 'map', grid: { x: { field: 'drive.frequency', from: 10, to: 20, count: 3 }, y: { field: 'drive.frequency', from: 30, to: 40, count: 3 } } }, 'grid.y.field', /differ/],
    ['a basin over other fields', { kind: 'basin', grid: { x: { field: 'drive.frequency', from: 10, to: 20, count: 3 }, y: { field: 'start.rate', from: -1, to: 1, count: 3 } } }, 'grid.x.field', /.+/],
    ['a margins tolerance of zero', { kind: 'margins', relTolerance: 0 }, 'relTolerance', /1e-14/],
    ['a leanest margin of 100 %', { ...leanestBase(), marginPercent: 100 }, 'marginPercent', /at most 90/],
    ['a leanest cost nobody offers', { ...leanestBase(), cost: 'noise' }, 'cost', /one of/],
    ['a crank whose largest radius is below its smallest', { ...leanestBase(), envelope: { kind: 'crank', minRadius: 0.02, maxRadius: 0.01 } }, 'envelope.maxRadius', /above the smallest crank radius/],
    ['a shaker force of zero', { ...leanestBase(), envelope: { kind: 'shaker', ratedForce: 0 } }, 'envelope.ratedForce', /above zero/],
    ['a leanest search from zero frequency', { ...leanestBase(), grid: { ...leanestBase().grid, x: { field: 'drive.frequency', from: 0, to: 20, count: 5 } } }, 'grid.x.from', /above zero/],
    ['a non-number limit', { kind: 'sweep', spec: { field: 'drive.amplitude', from: '0.001', to: 0.01, steps: 5 } }, 'spec.from', /finite number/],
  ])('refuses %s, naming the field', (_what, input, field, reason) => {
    const r = parseRunSettings(input);
    if (r.ok) throw new Error(`accepted ${JSON.stringify(input)}`);
    expect(r.field).toBe(field);
    expect(r.message).toMatch(reason);
  });

  it('refuses a field the case does not have (a connecting rod on a sine drive) and accepts it on a crank', () => {
    const crank = demoRigCase('bench-crank-rig');
    if (!crank) throw new Error('demo rig missing');
    const settings = { kind: 'sweep', spec: { field: 'drive.waveform.connectingRod', from: 0.1, to: 0.2, steps: 5 } };
    expect(c.drive.waveform.kind).toBe('sine');
    expect(parseRunSettingsFor(c, settings)).toEqual({ ok: false, field: 'spec.field', message: 'this case has no field drive.waveform.connectingRod' });
    expect(crank.drive.waveform.kind).toBe('crank-slider');
    expect(parseRunSettingsFor(crank, settings).ok).toBe(true);
  });
});
