/**
 * The run registry: everything the code knows per run kind, in one table. For each kind: the settings schema (the
 * one check of settings from a form, the CLI, the API or a stored record; strict, with bounds), default settings for
 * a case, the job that computes it (split into engine tasks, driven in this thread or by the worker pool), the
 * partial results a live plot can show while the job runs, and the flat summary stored with the run.
 *
 * Adding a kind: add its settings schema and types here, its tasks to engine-task.ts when it needs new ones, and an
 * entry in RUN_KIND_REGISTRY; the compiler then points at every place that must know it (see docs/engine.md).
 */
import { z } from 'zod';
import { CASE_LIMITS, type CaseParams } from '../case/case-schema';
import { bodyProperties } from './body';
import { SWEEPABLE_FIELDS, sweepableFieldsFor } from '../case/case-fields';
import { HOLDPROB_PARTS_WORDS, toleranceFieldLabel } from '../case/holdprob-words';
import { bindingWords } from '../case/leanest-words';
import { assembleChart, defaultChartGrid, type StabilityChart } from './chart';
import {
  assembleLeanest, leanestEdgeFrequencies, type LeanestEnvelope, type LeanestPoint, type LeanestResult, type LeanestSpec,
} from './leanest';
import type { EngineTask, TaskResult } from './engine-task';
import {
  assembleHoldProb, drawBlock, HOLDPROB_BLOCK, HOLDPROB_SAMPLES_PER_CHUNK, holdProbStream, wilsonInterval,
  type HoldDraw, type HoldProbResult, type HoldProbSpec, type HoldProbStop, type HoldSample,
} from './holdprob';
import { MULTIPLIER_UNIT_TOLERANCE, type FloquetAnalysis } from './floquet';
import type { MotionResult } from './motion';
import { expectResult, IN_THREAD, rowRanges, runJobInThread, type JobContext, type RunJob } from './run-job';
import {
  advanceThresholdSearch, assembleCellMap, assembleSweep, defaultBasinGrid, finishThresholdSearch, startThresholdSearch,
  sweepTolerance, thresholdBrackets, thresholdRoundValues, thresholdSearchOpen, thresholdStepsLeft, type ThresholdBracket,
  type CellMap, type ChunkHooks, type MapCell, type SweepPoint, type SweepResult,
} from './sweep';

// One rule for every client: a run these limits accept can be stored with a revision, rerun by the server and kept
// within the stored-result size limit (server/services/result-store.ts checks the largest of each kind fits).
/** Most points of a 1-D sweep (each point is a full motion run plus an upright Floquet analysis). */
export const MAX_SWEEP_STEPS = 400;
/** Most samples per axis of a stability chart (200 x 200 cells at most). */
export const MAX_CHART_COUNT = 200;
/** Most samples per axis of an outcome or basin map (each cell is a full motion run). */
export const MAX_MAP_COUNT = 200;

/** Rows per task of charts and maps, points per task of sweeps: fixed, so the split never depends on the pool. */
export const CHART_ROWS_PER_CHUNK = 8;
export const MAP_ROWS_PER_CHUNK = 1;
export const SWEEP_POINTS_PER_CHUNK = 2;
/** Midpoints a threshold round evaluates ahead for a 'multiplier' bracket on a pool: cheap, so in one task. */
export const MULTIPLIER_ROUND_VALUES = 7;

/**
 * Per open threshold bracket (in order), how many midpoints the next round evaluates: in this thread one each (plain
 * bisection); on `workers` workers the workers are shared out over the 'outcome' brackets, each midpoint a motion run
 * and a task, so a round is about one run long and takes about log2(share + 1) bisection steps per bracket.
 * The thresholds are the same for any budget (sweep.ts, `advanceThresholdSearch`).
 */
export function thresholdRoundBudgets(workers: number, kinds: ReadonlyArray<ThresholdBracket['kind']>): number[] {
  const w = Math.max(1, Math.floor(workers));
  const outcome = kinds.filter((k) => k === 'outcome').length;
  let nth = 0;
  return kinds.map((k) => {
    if (w === 1) return 1;
    if (k === 'multiplier') return MULTIPLIER_ROUND_VALUES;
    const i = nth++;
    return Math.max(1, Math.floor(w / outcome) + (i < w % outcome ? 1 : 0));
  });
}

/** Most samples per axis of a leanest-drive search (each column is a Floquet limit search). */
export const MAX_LEANEST_COUNT = 120;
/** Chart columns per task of a leanest-drive search. */
export const LEANEST_COLUMNS_PER_CHUNK = 4;

const SWEEPABLE_PATHS = SWEEPABLE_FIELDS.map((f) => f.path);
const fieldPath = z.string().refine((p) => SWEEPABLE_PATHS.includes(p), {
  message: `must be one of ${SWEEPABLE_PATHS.join(', ')}`,
});
const scale = z.enum(['linear', 'log']);
const limit = z.number({ message: 'must be a finite number' });

const positiveWhenLog = (v: { from: number; to: number; scale?: 'linear' | 'log' | undefined }): boolean =>
  v.scale !== 'log' || (v.from > 0 && v.to > 0);
const logMessage = { message: 'a log scale needs limits above zero', path: ['from'] };

/** A field that must be this one (typed string, so a basin grid is a plain Grid2). */
function onlyField(path: string) {
  return z.string().refine((p) => p === path, { message: `must be ${path}` });
}

function axisSchema<F extends z.ZodType<string>>(field: F, maxCount: number) {
  return z
    .strictObject({
      field,
      from: limit,
      to: limit,
      count: z.int({ message: 'must be a whole number' }).min(1, { message: 'must be at least 1' })
        .max(maxCount, { message: `must be at most ${maxCount}` }),
      scale: scale.optional(),
    })
    .refine(positiveWhenLog, logMessage);
}

function gridSchema(maxCount: number) {
  return z
    .strictObject({ x: axisSchema(fieldPath, maxCount), y: axisSchema(fieldPath, maxCount) })
    .refine((g) => g.x.field !== g.y.field, { message: 'must differ from x.field', path: ['y', 'field'] });
}

/** A 1-D sweep of one case field (shared/engine/sweep.ts SweepSpec). */
export const sweepSpecSchema = z
  .strictObject({
    field: fieldPath,
    from: limit,
    to: limit,
    steps: z.int({ message: 'must be a whole number' }).min(2, { message: 'must be at least 2' })
      .max(MAX_SWEEP_STEPS, { message: `must be at most ${MAX_SWEEP_STEPS}` }),
    scale: scale.optional(),
    tolerance: z.number().positive({ message: 'must be above zero' }).optional(),
  })
  .refine((s) => s.from !== s.to, { message: 'must differ from from', path: ['to'] })
  .refine(positiveWhenLog, logMessage);

export const motionSettingsSchema = z.strictObject({ kind: z.literal('motion') });
export const marginsSettingsSchema = z.strictObject({
  kind: z.literal('margins'),
  relTolerance: z.number().min(1e-14, { message: 'must be at least 1e-14' }).max(0.1, { message: 'must be at most 0.1' }),
});
export const sweepSettingsSchema = z.strictObject({ kind: z.literal('sweep'), spec: sweepSpecSchema });
export const chartSettingsSchema = z.strictObject({ kind: z.literal('chart'), grid: gridSchema(MAX_CHART_COUNT) });
export const mapSettingsSchema = z.strictObject({ kind: z.literal('map'), grid: gridSchema(MAX_MAP_COUNT) });
export const basinSettingsSchema = z.strictObject({
  kind: z.literal('basin'),
  grid: z.strictObject({
    x: axisSchema(onlyField('start.angle'), MAX_MAP_COUNT),
    y: axisSchema(onlyField('start.rate'), MAX_MAP_COUNT),
  }),
});

const positive = z.number({ message: 'must be a finite number' }).positive({ message: 'must be above zero' });
const ordered = <T extends Record<string, unknown>>(lo: keyof T & string, hi: keyof T & string, words: string) => ({
  check: (v: T) => v[lo] === undefined || v[hi] === undefined || Number(v[lo]) < Number(v[hi]),
  message: { message: `must be above the ${words}`, path: [hi] },
});
const positiveAxis = <F extends z.ZodType<string>>(field: F) =>
  axisSchema(field, MAX_LEANEST_COUNT)
    .refine((a) => a.from > 0 && a.to > 0 && a.from !== a.to, { message: 'must be above zero and differ from to', path: ['from'] });
const shakerEnvelopeSchema = z.strictObject({
  kind: z.literal('shaker'),
  ratedForce: positive.optional(),
  maxStroke: positive.optional(),
  maxVelocity: positive.optional(),
  minFrequency: positive.optional(),
  maxFrequency: positive.optional(),
});
const crankEnvelopeSchema = z.strictObject({
  kind: z.literal('crank'),
  minRadius: positive.optional(),
  maxRadius: positive.optional(),
  /** Hz (rev/s): the motor's speed range */
  minSpeed: positive.optional(),
  maxSpeed: positive.optional(),
});
const shakerOrder = ordered<z.infer<typeof shakerEnvelopeSchema>>('minFrequency', 'maxFrequency', 'lowest frequency');
const radiusOrder = ordered<z.infer<typeof crankEnvelopeSchema>>('minRadius', 'maxRadius', 'smallest crank radius');
const speedOrder = ordered<z.infer<typeof crankEnvelopeSchema>>('minSpeed', 'maxSpeed', 'lowest motor speed');
/** The drive hardware's limits: none, a shaker's ratings, or a motor and crank's ranges (SI). */
export const leanestEnvelopeSchema = z.discriminatedUnion('kind', [
  z.strictObject({ kind: z.literal('none') }),
  shakerEnvelopeSchema.refine(shakerOrder.check, shakerOrder.message),
  crankEnvelopeSchema.refine(radiusOrder.check, radiusOrder.message).refine(speedOrder.check, speedOrder.message),
]);
export const LEANEST_COSTS = ['acceleration', 'stroke', 'force', 'power'] as const;
export const leanestSettingsSchema = z.strictObject({
  kind: z.literal('leanest'),
  /** percent: wanted amplitude margin above the lower limit and below the upper */
  marginPercent: z.number({ message: 'must be a finite number' }).min(0, { message: 'must be at least 0' })
    .max(90, { message: 'must be at most 90' }),
  cost: z.enum(LEANEST_COSTS, { message: `must be one of ${LEANEST_COSTS.join(', ')}` }),
  grid: z.strictObject({ x: positiveAxis(onlyField('drive.frequency')), y: positiveAxis(onlyField('drive.amplitude')) }),
  /** kg moving with the pivot besides the body */
  movingMass: z.number({ message: 'must be a finite number' }).min(0, { message: 'must be at least 0' })
    .max(1e6, { message: 'must be at most 1000000' }),
  envelope: leanestEnvelopeSchema,
  relTolerance: z.number().min(1e-10, { message: 'must be at least 1e-10' }).max(1e-2, { message: 'must be at most 0.01' }),
});

/** Most samples of a hold-probability run (each is a Floquet analysis and/or a full motion run). */
export const MAX_HOLDPROB_SAMPLES = 4096;
export const HOLDPROB_PARTS = ['tolerances', 'noise', 'both'] as const;
export const holdprobSettingsSchema = z.strictObject({
  kind: z.literal('holdprob'),
  samples: z.int({ message: 'must be a whole number' }).min(HOLDPROB_SAMPLES_PER_CHUNK, { message: `must be at least ${HOLDPROB_SAMPLES_PER_CHUNK}` })
    .max(MAX_HOLDPROB_SAMPLES, { message: `must be at most ${MAX_HOLDPROB_SAMPLES}` }),
  sampler: z.enum(['latin-hypercube'], { message: 'must be latin-hypercube' }),
  seed: z.int({ message: 'must be a whole number' }).min(1, { message: 'must be at least 1' })
    .max(4294967295, { message: 'must be at most 4294967295' }),
  /** probability (0..1): stop once the 95 % interval is narrower; 0 never stops early */
  targetWidth: z.number({ message: 'must be a finite number' }).min(0, { message: 'must be at least 0' })
    .max(1, { message: 'must be at most 1' }),
  parts: z.enum(HOLDPROB_PARTS, { message: `must be one of ${HOLDPROB_PARTS.join(', ')}` }),
  relTolerance: z.number().min(1e-10, { message: 'must be at least 1e-10' }).max(1e-2, { message: 'must be at most 0.01' }),
});

export type MotionSettings = z.infer<typeof motionSettingsSchema>;
export type MarginsSettings = z.infer<typeof marginsSettingsSchema>;
export type SweepSettings = z.infer<typeof sweepSettingsSchema>;
export type ChartSettings = z.infer<typeof chartSettingsSchema>;
export type MapSettings = z.infer<typeof mapSettingsSchema>;
export type BasinSettings = z.infer<typeof basinSettingsSchema>;
export type LeanestSettings = z.infer<typeof leanestSettingsSchema>;
export type HoldProbSettings = z.infer<typeof holdprobSettingsSchema>;

/** The engine's form of hold-probability settings. */
export function holdProbSpecOf(s: HoldProbSettings): HoldProbSpec {
  return { samples: s.samples, sampler: s.sampler, seed: s.seed, targetWidth: s.targetWidth, parts: s.parts, relTolerance: s.relTolerance };
}

/**
 * Default hold-probability settings: 256 samples (stopping early once the 95 % interval is narrower than 10
 * percentage points), the parts the case has (its tolerances, its drive noise, or both), a fixed seed.
 */
export function defaultHoldProbSettings(params: CaseParams): HoldProbSettings {
  const noise = params.noise !== undefined;
  const tolerances = (params.tolerances?.length ?? 0) > 0;
  return {
    kind: 'holdprob', samples: 256, sampler: 'latin-hypercube', seed: 1927, targetWidth: 0.1,
    parts: noise ? (tolerances ? 'both' : 'noise') : 'tolerances', relTolerance: 1e-4,
  };
}

/**
 * A hold-probability run: blocks of HOLDPROB_BLOCK samples, each block one stage of fixed chunks; between blocks,
 * the Wilson interval decides whether to stop (deterministic: whole blocks, the same numbers on any pool).
 */
function* holdprobJob(params: CaseParams, settings: HoldProbSettings): RunJob<HoldProbResult> {
  const spec = holdProbSpecOf(settings);
  const rand = holdProbStream(spec.seed);
  const draws: HoldDraw[] = [];
  const samples: HoldSample[] = [];
  let stopped: HoldProbStop = 'all-samples';
  for (let start = 0; start < spec.samples; start += HOLDPROB_BLOCK) {
    const block = drawBlock(params, spec, rand, Math.min(HOLDPROB_BLOCK, spec.samples - start));
    const results = yield {
      tasks: rowRanges(block.length, HOLDPROB_SAMPLES_PER_CHUNK).map(([from, to]) => ({
        type: 'holdprob-chunk', params, spec, from: start + from, draws: block.slice(from, to),
      })),
      span: [start / spec.samples, Math.min(1, (start + block.length) / spec.samples)],
    };
    draws.push(...block);
    for (const r of results) samples.push(...expectResult(r, 'holdprob-samples').samples);
    const held = samples.filter((s) => s.held).length;
    const { lower, upper } = wilsonInterval(held, samples.length);
    if (spec.targetWidth > 0 && samples.length < spec.samples && upper - lower < spec.targetWidth) {
      stopped = 'target-width';
      break;
    }
  }
  return assembleHoldProb(params, spec, draws, samples, stopped);
}

/** The engine's form of leanest-drive settings: one flat envelope in SI. */
export function leanestSpecOf(settings: LeanestSettings): LeanestSpec {
  const e = settings.envelope;
  let envelope: LeanestEnvelope = {};
  if (e.kind === 'shaker') {
    envelope = {
      ratedForce: e.ratedForce, maxStroke: e.maxStroke, maxVelocity: e.maxVelocity,
      minFrequency: e.minFrequency, maxFrequency: e.maxFrequency,
    };
  } else if (e.kind === 'crank') {
    envelope = { minAmplitude: e.minRadius, maxAmplitude: e.maxRadius, minFrequency: e.minSpeed, maxFrequency: e.maxSpeed };
  }
  // Absent limits stay absent (no undefined keys), so the spec is the same however it travelled.
  const defined = Object.fromEntries(Object.entries(envelope).filter(([, v]) => v !== undefined)) as LeanestEnvelope;
  return {
    marginPercent: settings.marginPercent, cost: settings.cost, grid: settings.grid, movingMass: settings.movingMass,
    envelope: defined, relTolerance: settings.relTolerance,
  };
}

/**
 * Default leanest-drive settings: +15 % on peak acceleration, 40 by 40 (log) over a sixteenth to four times the
 * case's frequency (the least acceleration sits at low frequency) by a tenth of its amplitude to the larger of ten
 * times it and the equivalent length (the upper limit lies near half that length), below a crank's connecting rod.
 */
export function defaultLeanestSettings(params: CaseParams): LeanestSettings {
  const f = params.drive.frequency;
  const a = Math.max(params.drive.amplitude, 1e-6);
  const L = bodyProperties(params.body, params.gravity).equivalentLength;
  let aTo = Math.min(Math.max(10 * a, L), CASE_LIMITS.maxAmplitude);
  if (params.drive.waveform.kind === 'crank-slider') aTo = Math.min(aTo, 0.99 * params.drive.waveform.connectingRod);
  return {
    kind: 'leanest', marginPercent: 15, cost: 'acceleration',
    grid: {
      x: { field: 'drive.frequency', from: f / 16, to: 4 * f, count: 40, scale: 'log' },
      y: { field: 'drive.amplitude', from: a / 10, to: aTo, count: 40, scale: 'log' },
    },
    movingMass: 0, envelope: { kind: 'none' }, relTolerance: 1e-6,
  };
}

/** A finished row range of a chunked chart or map, for plots that fill in while the job runs. */
export interface RowsPartial<V> {
  rowFrom: number;
  rowTo: number;
  values: V;
}

/** Per kind: its settings, its result value and what its job reports as partial results. */
export interface RunKindTypes {
  motion: { settings: MotionSettings; value: MotionResult; partial: never };
  margins: { settings: MarginsSettings; value: FloquetAnalysis; partial: never };
  sweep: { settings: SweepSettings; value: SweepResult; partial: SweepPoint[] };
  chart: { settings: ChartSettings; value: StabilityChart; partial: RowsPartial<Float64Array> };
  map: { settings: MapSettings; value: CellMap; partial: RowsPartial<MapCell[]> };
  basin: { settings: BasinSettings; value: CellMap; partial: RowsPartial<MapCell[]> };
  leanest: { settings: LeanestSettings; value: LeanestResult; partial: RowsPartial<Float64Array> };
  holdprob: { settings: HoldProbSettings; value: HoldProbResult; partial: { from: number; samples: HoldSample[] } };
}

export type RunKind = keyof RunKindTypes;
export type RunSettingsOf<K extends RunKind> = RunKindTypes[K]['settings'];
export type RunValueOf<K extends RunKind> = RunKindTypes[K]['value'];
export type RunPartialOf<K extends RunKind> = RunKindTypes[K]['partial'];

/** Settings of any kind, discriminated by `kind`. */
export type RunSettings = { [K in RunKind]: RunSettingsOf<K> }[RunKind];
/** A computed result of any kind. */
export type RunResult = { [K in RunKind]: { kind: K; value: RunValueOf<K> } }[RunKind];

/** Flat headline numbers of a run (and a few words). */
export type RunSummary = Record<string, number | string | boolean | null>;

/** What the code knows about one run kind. */
export interface RunKindDef<K extends RunKind> {
  /** Strict settings check: unknown keys, non-finite numbers and sizes beyond the limits above are refused. */
  readonly settings: z.ZodType<RunSettingsOf<K>>;
  /** True when the job splits into several tasks, so a pool of workers speeds it up. */
  readonly chunked: boolean;
  /** Default settings for a case (the case page's first run of this kind). */
  defaults(params: CaseParams): RunSettingsOf<K>;
  /**
   * The job computing a run: its tasks, stage by stage, then the assembled value. The context may change how much
   * work is done ahead, never the value.
   */
  job(params: CaseParams, settings: RunSettingsOf<K>, context: JobContext): RunJob<RunValueOf<K>>;
  /** The partial result a finished task contributes, if any. */
  partial(result: TaskResult): RunPartialOf<K> | undefined;
  /** Headline numbers stored with the run and compared by a recheck. */
  summarise(value: RunValueOf<K>): RunSummary;
  /** The case fields the settings vary, each with its dotted path inside the settings. */
  fields(settings: RunSettingsOf<K>): Array<{ at: string; field: string }>;
  /** What else the settings need of the case, beyond its fields: the problem (dotted path in the settings), or null. */
  needs?(params: CaseParams, settings: RunSettingsOf<K>): { at: string; message: string } | null;
}

const noPartial = (): undefined => undefined;

function* sweepJob(params: CaseParams, { spec }: SweepSettings, context: JobContext): RunJob<SweepResult> {
  const pointParts = yield {
    tasks: rowRanges(spec.steps, SWEEP_POINTS_PER_CHUNK).map(([from, to]) => ({
      type: 'sweep-chunk', params, spec, part: { kind: 'points', from, to },
    })),
    span: [0, 0.7],
  };
  const points = pointParts.flatMap((r) => expectResult(r, 'sweep-points').points);
  const brackets = thresholdBrackets(points);
  if (context.costlyStages) {
    // A stage costs more than a bisection's runs (a queue round trip): each bracket's whole bisection in one task.
    const parts = yield {
      tasks: brackets.map((b) => ({ type: 'sweep-chunk', params, spec, part: { kind: 'thresholds', brackets: [b] } })),
      span: [0.7, 1],
    };
    return assembleSweep(spec, points, parts.flatMap((r) => expectResult(r, 'sweep-thresholds').thresholds));
  }
  const tolerance = sweepTolerance(spec);
  const searches = brackets.map(startThresholdSearch);
  // Progress per round, from an estimate of the rounds: the steps the widest bracket needs at the first budgets.
  const firstBudgets = thresholdRoundBudgets(context.workers, searches.map((s) => s.bracket.kind));
  const rounds = Math.max(1, ...searches.map((s, i) => Math.ceil(thresholdStepsLeft(spec, s, tolerance) / (31 - Math.clz32(firstBudgets[i] + 1)))));
  for (let round = 0; ; round++) {
    const open = searches.filter((s) => thresholdSearchOpen(s, tolerance));
    if (open.length === 0) break;
    const budgets = thresholdRoundBudgets(context.workers, open.map((s) => s.bracket.kind));
    // A motion run per task for outcome brackets; a bracket's upright verdicts are cheap, so they share one task.
    const tasks: EngineTask[] = open.flatMap((search, i) => {
      const bracket = search.bracket.kind;
      const values = thresholdRoundValues(spec, search, budgets[i], tolerance);
      const groups = bracket === 'outcome' ? values.map((v) => [v]) : [values];
      return groups.map((g) => ({ type: 'sweep-chunk', params, spec, part: { kind: 'threshold-probes', bracket, values: g } }) as const);
    });
    const results = yield {
      tasks, span: [0.7 + (0.3 * Math.min(round, rounds)) / rounds, 0.7 + (0.3 * Math.min(round + 1, rounds)) / rounds],
    };
    // Outcomes are read by value, from what each task says it evaluated: a driver replaying the job over stored
    // results (the server) stays right even if a round was planned for another worker count.
    const answered = results.map((r) => expectResult(r, 'sweep-probes'));
    for (const search of open) {
      const mine = answered.filter((a) => a.bracket === search.bracket.kind);
      advanceThresholdSearch(spec, search, tolerance, mine.flatMap((a) => a.values), mine.flatMap((a) => a.outcomes));
    }
  }
  return assembleSweep(spec, points, searches.map((s) => finishThresholdSearch(s, tolerance)));
}

function* mapJob(params: CaseParams, settings: MapSettings | BasinSettings, type: 'map-chunk' | 'basin-chunk'): RunJob<CellMap> {
  const grid = settings.grid;
  const rows = yield {
    tasks: rowRanges(grid.y.count, MAP_ROWS_PER_CHUNK).map(([rowFrom, rowTo]) => ({ type, params, grid, rowFrom, rowTo })),
    span: [0, 1],
  };
  const resultKind = type === 'map-chunk' ? 'map-rows' : 'basin-rows';
  return assembleCellMap(grid, rows.flatMap((r) => expectResult(r, resultKind).cells));
}

function rowsPartial(result: TaskResult, kind: 'map-rows' | 'basin-rows'): RowsPartial<MapCell[]> | undefined {
  return result.kind === kind ? { rowFrom: result.rowFrom, rowTo: result.rowTo, values: result.cells } : undefined;
}

function gridFields({ grid }: { grid: { x: { field: string }; y: { field: string } } }): Array<{ at: string; field: string }> {
  return [{ at: 'grid.x.field', field: grid.x.field }, { at: 'grid.y.field', field: grid.y.field }];
}

function countOutcomes(cells: readonly MapCell[]): RunSummary {
  const summary: RunSummary = { cells: cells.length };
  for (const o of ['holds-upright', 'settles-tilted', 'falls', 'tumbles', 'irregular', 'invalid']) summary[`count.${o}`] = 0;
  for (const c of cells) {
    const key = `count.${c.outcome ?? 'invalid'}`;
    summary[key] = Number(summary[key]) + 1;
  }
  return summary;
}

function* leanestJob(params: CaseParams, settings: LeanestSettings): RunJob<LeanestResult> {
  const spec = leanestSpecOf(settings);
  const grid = settings.grid;
  const chartTasks = rowRanges(grid.y.count, CHART_ROWS_PER_CHUNK).map(([rowFrom, rowTo]) => ({
    type: 'chart-chunk' as const, params, grid, rowFrom, rowTo,
  }));
  const columnTasks = rowRanges(grid.x.count, LEANEST_COLUMNS_PER_CHUNK).map(([from, to]) => ({
    type: 'leanest-points' as const, params, spec, part: { kind: 'columns' as const, from, to },
  }));
  const edges = leanestEdgeFrequencies(params, spec);
  const edgeTasks = edges.length
    ? [{ type: 'leanest-points' as const, params, spec, part: { kind: 'frequencies' as const, frequencies: edges } }]
    : [];
  const coarse = yield { tasks: [...chartTasks, ...columnTasks, ...edgeTasks], span: [0, 0.7] };
  const values = new Float64Array(grid.x.count * grid.y.count);
  const columns: LeanestPoint[] = [];
  const extra: LeanestPoint[] = [];
  const cells = new Float64Array(grid.x.count * grid.y.count);
  for (const r of coarse) {
    if (r.kind === 'chart-rows') {
      values.set(r.values, r.rowFrom * grid.x.count);
      continue;
    }
    const p = expectResult(r, 'leanest-points');
    if (p.part.kind === 'columns') {
      columns.push(...p.points);
      cells.set(p.cells, p.part.from * grid.y.count);
    } else {
      extra.push(...p.points);
    }
  }
  const [refined] = yield { tasks: [{ type: 'leanest-refine', params, spec, points: [...columns, ...extra] }], span: [0.7, 1] };
  return assembleLeanest(spec, assembleChart(params, grid, values), columns, cells, expectResult(refined, 'leanest-optimum').optimum);
}

/** The registry. */
export const RUN_KIND_REGISTRY: { readonly [K in RunKind]: RunKindDef<K> } = {
  motion: {
    settings: motionSettingsSchema,
    chunked: false,
    defaults: () => ({ kind: 'motion' }),
    *job(params) {
      const [r] = yield { tasks: [{ type: 'motion', params }], span: [0, 1] };
      return expectResult(r, 'motion').motion;
    },
    partial: noPartial,
    fields: () => [],
    summarise: (m) => ({
      outcome: m.outcome,
      status: m.status,
      finalTheta: m.summary.finalTheta,
      finalRate: m.summary.finalRate,
      maxDeviation: m.outcomeNumbers.maxDeviation,
      meanAngle: m.outcomeNumbers.meanAngle,
      slowFrequencyHz: m.outcomeNumbers.slowFrequencyHz,
      peakPivotAccelerationG: m.summary.peakPivotAccelerationG,
      peakPivotForce: m.summary.peakPivotForce,
      rhsEvaluations: m.rhsEvaluations,
    }),
  },
  margins: {
    settings: marginsSettingsSchema,
    chunked: false,
    defaults: () => ({ kind: 'margins', relTolerance: 1e-6 }),
    *job(params, settings) {
      const [r] = yield { tasks: [{ type: 'margins', params, relTolerance: settings.relTolerance }], span: [0, 1] };
      return expectResult(r, 'margins').analysis;
    },
    partial: noPartial,
    fields: () => [],
    summarise: (f) => ({
      uprightHolds: f.uprightHolds,
      uprightMaxMultiplier: f.upright ? f.upright.maxMultiplier : null,
      amplitudeLower: f.amplitudeLimits.lower,
      amplitudeUpper: f.amplitudeLimits.upper,
      frequencyLower: f.frequencyLimits.lower,
      frequencyUpper: f.frequencyLimits.upper,
      marginPercent: f.marginPercent,
      periodicMotions: f.periodicMotions.length,
    }),
  },
  sweep: {
    settings: sweepSettingsSchema,
    chunked: true,
    defaults: (params) => {
      const a = params.drive.amplitude;
      return { kind: 'sweep', spec: { field: 'drive.amplitude', from: a / 4, to: a * 2, steps: 15 } };
    },
    job: sweepJob,
    partial: (r) => (r.kind === 'sweep-points' ? r.points : undefined),
    fields: ({ spec }) => [{ at: 'spec.field', field: spec.field }],
    summarise: (s) => {
      const summary: RunSummary = { field: s.field, points: s.points.length, thresholds: s.thresholds.length };
      s.points.forEach((p, i) => {
        summary[`point.${i}.outcome`] = p.outcome;
        summary[`point.${i}.maxMultiplier`] = p.maxMultiplier;
      });
      s.thresholds.forEach((t, i) => {
        summary[`threshold.${i}.kind`] = t.kind;
        summary[`threshold.${i}.value`] = t.value;
      });
      return summary;
    },
  },
  chart: {
    settings: chartSettingsSchema,
    chunked: true,
    defaults: (params) => ({ kind: 'chart', grid: defaultChartGrid(params, 100) }),
    *job(params, { grid }) {
      const parts = yield {
        tasks: rowRanges(grid.y.count, CHART_ROWS_PER_CHUNK).map(([rowFrom, rowTo]) => ({
          type: 'chart-chunk', params, grid, rowFrom, rowTo,
        })),
        span: [0, 1],
      };
      const values = new Float64Array(grid.x.count * grid.y.count);
      for (const r of parts) {
        const rows = expectResult(r, 'chart-rows');
        values.set(rows.values, rows.rowFrom * grid.x.count);
      }
      return assembleChart(params, grid, values);
    },
    // A copy: the job keeps the task's array for the assembled chart.
    partial: (r) => (r.kind === 'chart-rows' ? { rowFrom: r.rowFrom, rowTo: r.rowTo, values: r.values.slice() } : undefined),
    fields: gridFields,
    summarise: (c) => {
      let holding = 0;
      let least = Infinity;
      for (const v of c.maxMultiplier) {
        if (v < 1 + MULTIPLIER_UNIT_TOLERANCE) holding++;
        least = Math.min(least, v);
      }
      return {
        cells: c.maxMultiplier.length,
        holdingCells: holding,
        leastMultiplier: least,
        caseMaxMultiplier: c.caseMark.maxMultiplier,
      };
    },
  },
  map: {
    settings: mapSettingsSchema,
    chunked: true,
    defaults: (params) => {
      const f = params.drive.frequency;
      const a = params.drive.amplitude;
      return {
        kind: 'map',
        grid: {
          x: { field: 'drive.frequency', from: f / 2, to: 2 * f, count: 9 },
          y: { field: 'drive.amplitude', from: a / 2, to: 2 * a, count: 9 },
        },
      };
    },
    job: (params, settings) => mapJob(params, settings, 'map-chunk'),
    partial: (r) => rowsPartial(r, 'map-rows'),
    fields: gridFields,
    summarise: (m) => countOutcomes(m.cells),
  },
  basin: {
    settings: basinSettingsSchema,
    chunked: true,
    defaults: (params) => ({ kind: 'basin', grid: defaultBasinGrid(params, 11) }),
    job: (params, settings) => mapJob(params, settings, 'basin-chunk'),
    partial: (r) => rowsPartial(r, 'basin-rows'),
    fields: gridFields,
    summarise: (m) => countOutcomes(m.cells),
  },
  leanest: {
    settings: leanestSettingsSchema,
    chunked: true,
    defaults: defaultLeanestSettings,
    job: leanestJob,
    partial: (r) => (r.kind === 'chart-rows' ? { rowFrom: r.rowFrom, rowTo: r.rowTo, values: r.values.slice() } : undefined),
    fields: gridFields,
    summarise: (l) => {
      const o = l.optimum;
      let feasibleCells = 0;
      for (const v of l.feasible) feasibleCells += v;
      return {
        cost: l.cost,
        targetMarginPercent: l.marginPercent,
        feasibleCells,
        found: o !== null,
        optimumFrequency: o?.frequency ?? null,
        optimumAmplitude: o?.amplitude ?? null,
        optimumPeakAcceleration: o?.peakAcceleration ?? null,
        optimumStroke: o?.stroke ?? null,
        optimumForce: o?.force ?? null,
        optimumPower: o?.power ?? null,
        binding: o ? bindingWords(o.binding) : null,
        amplitudeMarginPercent: o?.amplitudeMarginPercent ?? null,
        frequencyMarginPercent: o?.frequencyMarginPercent ?? null,
      };
    },
  },
  holdprob: {
    settings: holdprobSettingsSchema,
    chunked: true,
    defaults: defaultHoldProbSettings,
    job: holdprobJob,
    partial: (r) => (r.kind === 'holdprob-samples' ? { from: r.from, samples: r.samples } : undefined),
    fields: () => [],
    needs: (params, s) => {
      if (s.parts !== 'noise' && !params.tolerances?.length) return { at: 'parts', message: 'this case has no tolerances' };
      if (s.parts !== 'tolerances' && !params.noise) return { at: 'parts', message: 'this case has no drive noise' };
      return null;
    },
    summarise: (h) => ({
      parts: HOLDPROB_PARTS_WORDS[h.parts],
      probability: h.probability,
      intervalLower: h.interval.lower,
      intervalUpper: h.interval.upper,
      samplesUsed: h.samplesUsed,
      samplesHeld: h.held,
      samplesInvalid: h.invalid,
      stoppedEarly: h.stopped === 'target-width',
      seed: h.seed,
      // the on-screen label of the field whose spread matters most (ranking is largest |rho| first)
      mostInfluential: h.ranking[0]?.rankCorrelation != null ? toleranceFieldLabel(h.ranking[0].field) : null,
    }),
  },
};
export const RUN_KINDS = Object.keys(RUN_KIND_REGISTRY) as readonly RunKind[];

export function isRunKind(value: unknown): value is RunKind {
  return typeof value === 'string' && Object.hasOwn(RUN_KIND_REGISTRY, value);
}

/** Settings of any kind: the kind's strict schema chosen by `kind`. */
export const runSettingsSchema = z.discriminatedUnion('kind', [
  motionSettingsSchema, marginsSettingsSchema, sweepSettingsSchema, chartSettingsSchema, mapSettingsSchema, basinSettingsSchema,
  leanestSettingsSchema, holdprobSettingsSchema,
]);

/** The registry entry of a kind (typed for that kind). */
export function runKind<K extends RunKind>(kind: K): RunKindDef<K> {
  return RUN_KIND_REGISTRY[kind];
}

/** Default settings of a kind for a case. */
export function defaultRunSettings<K extends RunKind>(kind: K, params: CaseParams): RunSettingsOf<K> {
  return runKind(kind).defaults(params);
}

function* taggedJob<K extends RunKind>(kind: K, params: CaseParams, settings: RunSettingsOf<K>, context: JobContext): RunJob<RunResult> {
  const value = yield* runKind(kind).job(params, settings, context);
  // { kind: K; value: RunValueOf<K> } is a RunResult for every K; the compiler cannot correlate the two.
  return { kind, value } as RunResult;
}

/** The job computing a run of any kind, its value tagged with the kind (by default for this thread). */
export function runJob(params: CaseParams, settings: RunSettings, context: JobContext = IN_THREAD): RunJob<RunResult> {
  return taggedJob(settings.kind, params, settings, context);
}

/** Computes a run in this thread (the CLI and the server's recheck; the UI uses the worker pool). */
export function computeRun(params: CaseParams, settings: RunSettings, hooks: ChunkHooks = {}): RunResult {
  return runJobInThread(runJob(params, settings), hooks);
}

function summariseKind<K extends RunKind>(kind: K, value: RunValueOf<K>): RunSummary {
  return runKind(kind).summarise(value);
}

/** Headline numbers of a run result. */
export function summariseRun(result: RunResult): RunSummary {
  return summariseKind(result.kind, result.value);
}

/** Checks settings of any kind; on failure, the dotted path of the first problem inside the settings and why. */
export function parseRunSettings(input: unknown): { ok: true; value: RunSettings } | { ok: false; field: string; message: string } {
  const parsed = runSettingsSchema.safeParse(input);
  if (parsed.success) return { ok: true, value: parsed.data };
  const issue = parsed.error.issues[0];
  return { ok: false, field: issue.path.join('.'), message: issue.message };
}

function fieldsOf<K extends RunKind>(kind: K, settings: RunSettingsOf<K>): Array<{ at: string; field: string }> {
  return runKind(kind).fields(settings);
}

function needsOf<K extends RunKind>(kind: K, params: CaseParams, settings: RunSettingsOf<K>): { at: string; message: string } | null {
  return runKind(kind).needs?.(params, settings) ?? null;
}

/**
 * Checks settings for a given case: the schema, then that every field they vary exists in this case (a rod's
 * length only for a rod-and-bob body, a connecting rod only for a crank-slider drive), and what else the kind needs
 * of the case (a hold probability: the tolerances or drive noise it samples).
 */
export function parseRunSettingsFor(
  params: CaseParams, input: unknown,
): { ok: true; value: RunSettings } | { ok: false; field: string; message: string } {
  const parsed = parseRunSettings(input);
  if (!parsed.ok) return parsed;
  const present = new Set(sweepableFieldsFor(params).map((f) => f.path));
  const missing = fieldsOf(parsed.value.kind, parsed.value).find((f) => !present.has(f.field));
  if (missing) return { ok: false, field: missing.at, message: `this case has no field ${missing.field}` };
  const need = needsOf(parsed.value.kind, params, parsed.value);
  return need ? { ok: false, field: need.at, message: need.message } : parsed;
}
