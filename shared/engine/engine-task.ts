/**
 * Engine tasks: the units of work a run is split into. A worker (browser Web Worker or Node worker_threads) computes
 * one task per request, and a run computed in this thread computes the same tasks one after another, so both give
 * identical numbers. Every task is independent of the others: its numbers do not depend on how tasks are spread over
 * workers.
 */
import type { CaseParams } from '../case/case-schema';
import { stabilityChartRows, type Grid2 } from './chart';
import type { MotionOutcome } from './classify';
import { fitFreeSwing, type FitModel, type FitResult } from './fit';
import { floquetAnalysis, type FloquetAnalysis } from './floquet';
import { axisValues } from './chart';
import { holdSamples, type HoldDraw, type HoldProbSpec, type HoldSample } from './holdprob';
import { leanestColumns, leanestRefine, type LeanestOptimum, type LeanestPoint, type LeanestSpec } from './leanest';
import { EngineCancelledError, simulateMotion, type MotionResult } from './motion';
import { overlayDrivenTrace, type OverlayResult } from './trace-drive';
import {
  basinMapRows, outcomeMapRows, sweepPoints, sweepThresholds, thresholdOutcomes,
  type BasinCell, type ChunkHooks, type MapCell, type SweepPoint, type SweepSpec, type SweepThreshold, type ThresholdBracket,
} from './sweep';

/** Simulate the motion of one case. */
export interface MotionTask {
  type: 'motion';
  params: CaseParams;
}

/** Floquet analysis: upright multipliers, periodic motions, drive limits and margins. */
export interface MarginsTask {
  type: 'margins';
  params: CaseParams;
  relTolerance?: number;
}

/**
 * Part of a 1-D sweep: the points with index in [from, to); the outcomes (for a 'multiplier' bracket the upright's
 * verdicts) at values a round of threshold refinement evaluates; or the whole serial bisection of each given bracket.
 */
export interface SweepChunkTask {
  type: 'sweep-chunk';
  params: CaseParams;
  spec: SweepSpec;
  part:
    | { kind: 'points'; from: number; to: number }
    | { kind: 'threshold-probes'; bracket: ThresholdBracket['kind']; values: number[] }
    | { kind: 'thresholds'; brackets: ThresholdBracket[] };
}

/** Rows [rowFrom, rowTo) of a stability chart. */
export interface ChartChunkTask {
  type: 'chart-chunk';
  params: CaseParams;
  grid: Grid2;
  rowFrom: number;
  rowTo: number;
}

/** Rows [rowFrom, rowTo) of a basin map (start angle along x, start rate along y). */
export interface BasinChunkTask {
  type: 'basin-chunk';
  params: CaseParams;
  grid: Grid2;
  rowFrom: number;
  rowTo: number;
}

/** Rows [rowFrom, rowTo) of an outcome map over two case fields. */
export interface MapChunkTask {
  type: 'map-chunk';
  params: CaseParams;
  grid: Grid2;
  rowFrom: number;
  rowTo: number;
}

/** Fit a free swing (times s, angles rad from any fixed zero); no case needed. */
export interface FitTask {
  type: 'fit';
  trace: { time: number[]; angle: number[] };
  model: FitModel;
  gravity?: number;
  frictionSmoothing?: number;
}

/** Measured against simulated motion of a driven trace (angles rad from the upright, pivot m). */
export interface OverlayTask {
  type: 'overlay';
  params: CaseParams;
  trace: { time: number[]; angle: number[]; pivot: number[] };
  partAngle?: number;
  holdLimit?: number;
}

/**
 * Leanest drive, coarse pass: the cheapest admissible drive at chart columns [from, to) with their admissible
 * cells, or (no range) at the given extra frequencies (the envelope's frequency ends) without cells.
 */
export interface LeanestPointsTask {
  type: 'leanest-points';
  params: CaseParams;
  spec: LeanestSpec;
  part: { kind: 'columns'; from: number; to: number } | { kind: 'frequencies'; frequencies: number[] };
}

/** Leanest drive, refinement from the coarse points: edges, golden section, the optimum described. */
export interface LeanestRefineTask {
  type: 'leanest-refine';
  params: CaseParams;
  spec: LeanestSpec;
  points: LeanestPoint[];
}

/** Hold probability: samples [from, from + draws.length) of a run, each from its drawn values and noise seed. */
export interface HoldProbChunkTask {
  type: 'holdprob-chunk';
  params: CaseParams;
  spec: HoldProbSpec;
  from: number;
  draws: HoldDraw[];
}

export type EngineTask =
  | FitTask | OverlayTask | MotionTask | MarginsTask | SweepChunkTask | ChartChunkTask | BasinChunkTask | MapChunkTask
  | LeanestPointsTask | LeanestRefineTask | HoldProbChunkTask;

export type EngineTaskType = EngineTask['type'];

export const ENGINE_TASK_TYPES: readonly EngineTaskType[] = [
  'fit', 'overlay', 'motion', 'margins', 'sweep-chunk', 'chart-chunk', 'basin-chunk', 'map-chunk',
  'leanest-points', 'leanest-refine', 'holdprob-chunk',
];

/** Result payloads, one per task type. */
export type TaskResult =
  | { kind: 'motion'; motion: MotionResult }
  | { kind: 'margins'; analysis: FloquetAnalysis }
  | { kind: 'sweep-points'; points: SweepPoint[] }
  | { kind: 'sweep-probes'; bracket: ThresholdBracket['kind']; values: number[]; outcomes: Array<MotionOutcome | null> }
  | { kind: 'sweep-thresholds'; thresholds: SweepThreshold[] }
  | { kind: 'chart-rows'; rowFrom: number; rowTo: number; values: Float64Array }
  | { kind: 'basin-rows'; rowFrom: number; rowTo: number; cells: BasinCell[] }
  | { kind: 'map-rows'; rowFrom: number; rowTo: number; cells: MapCell[] }
  | { kind: 'fit'; fit: FitResult }
  | { kind: 'overlay'; overlay: OverlayResult }
  | { kind: 'leanest-points'; part: LeanestPointsTask['part']; points: LeanestPoint[]; cells: Float64Array }
  | { kind: 'leanest-optimum'; optimum: LeanestOptimum | null }
  | { kind: 'holdprob-samples'; from: number; samples: HoldSample[] };

/**
 * Computes one task (its case already validated). Throws EngineCancelledError when `shouldCancel` turns true, and
 * whatever the engine throws for an impossible case.
 */
export function computeTask(task: EngineTask, hooks: ChunkHooks = {}): TaskResult {
  if (task.type === 'fit') {
    const { trace, model, gravity, frictionSmoothing } = task;
    return { kind: 'fit', fit: fitFreeSwing(trace, { model, gravity, frictionSmoothing, ...hooks }) };
  }
  const params = task.params;
  switch (task.type) {
    case 'overlay': {
      const { trace, partAngle, holdLimit } = task;
      return { kind: 'overlay', overlay: overlayDrivenTrace(params, trace, { partAngle, holdLimit, ...hooks }) };
    }
    case 'motion':
      return { kind: 'motion', motion: simulateMotion(params, hooks) };
    case 'margins':
      return { kind: 'margins', analysis: floquetAnalysis(params, { relTolerance: task.relTolerance }) };
    case 'sweep-chunk': {
      const part = task.part;
      if (part.kind === 'points') {
        return { kind: 'sweep-points', points: sweepPoints(params, task.spec, part.from, part.to, hooks) };
      }
      if (part.kind === 'thresholds') {
        return { kind: 'sweep-thresholds', thresholds: sweepThresholds(params, task.spec, part.brackets, hooks) };
      }
      const { bracket, values } = part;
      return { kind: 'sweep-probes', bracket, values, outcomes: thresholdOutcomes(params, task.spec, bracket, values, hooks) };
    }
    case 'chart-chunk': {
      const { values, cancelled } = stabilityChartRows(params, task.grid, task.rowFrom, task.rowTo, hooks.onProgress, hooks.shouldCancel);
      if (cancelled) throw new EngineCancelledError();
      return { kind: 'chart-rows', rowFrom: task.rowFrom, rowTo: task.rowTo, values };
    }
    case 'basin-chunk':
      return {
        kind: 'basin-rows', rowFrom: task.rowFrom, rowTo: task.rowTo,
        cells: basinMapRows(params, task.grid, task.rowFrom, task.rowTo, hooks),
      };
    case 'map-chunk':
      return {
        kind: 'map-rows', rowFrom: task.rowFrom, rowTo: task.rowTo,
        cells: outcomeMapRows(params, task.grid, task.rowFrom, task.rowTo, hooks),
      };
    case 'leanest-points': {
      const { spec, part } = task;
      const { points, cells } = part.kind === 'columns'
        ? leanestColumns(params, spec, Array.from(axisValues(spec.grid.x).subarray(part.from, part.to)), axisValues(spec.grid.y), hooks)
        : leanestColumns(params, spec, part.frequencies, null, hooks);
      return { kind: 'leanest-points', part, points, cells };
    }
    case 'leanest-refine':
      return { kind: 'leanest-optimum', optimum: leanestRefine(params, task.spec, task.points, hooks) };
    case 'holdprob-chunk':
      return { kind: 'holdprob-samples', from: task.from, samples: holdSamples(params, task.spec, task.draws, hooks) };
  }
}
