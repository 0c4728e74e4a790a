/**
 * Sweeps: the outcome of the full nonlinear motion as one case field varies (1-D, with thresholds), over two fields
 * (outcome map), and over start angle and start rate (basin map).
 *
 * Every point is an independent run of `simulateMotion` on a copy of the case with the field(s) replaced (through
 * setField, then validated again), so the numbers do not depend on how the points are split between workers. The
 * functions take an index range for that split. Thresholds are where the outcome changes between neighbouring
 * points, refined by bisection on the field to a stated absolute tolerance; the largest |Floquet multiplier| of the
 * upright (floquet.ts) is reported per point, and its crossings of 1 are thresholds too.
 */
import type { CaseParams } from '../case/case-schema';
import { getField, setField } from '../case/case-fields';
import { parseCase } from '../case/validate';
import { bodyProperties } from './body';
import { axisValues, type Grid2 } from './chart';
import type { MotionOutcome } from './classify';
import { MULTIPLIER_UNIT_TOLERANCE, uprightMaxMultiplier } from './floquet';
import { EngineCancelledError, simulateMotion } from './motion';
import { ENGINE_VERSION } from './version';

/** A 1-D sweep of one numeric case field. */
export interface SweepSpec {
  /** Dotted case path, e.g. 'drive.amplitude'. */
  field: string;
  from: number;
  to: number;
  /** Number of points (>= 2). */
  steps: number;
  /** Spacing of the points (default linear; log needs from, to > 0). */
  scale?: 'linear' | 'log';
  /** Absolute tolerance (field units) of the thresholds; default the point spacing / 64 (six bisections). */
  tolerance?: number;
}

/** The motion outcome and numbers at one value of the swept field(s). */
export interface MapCell {
  /** null when the case is invalid at this value (see `error`). */
  outcome: MotionOutcome | null;
  /** rad: mean slow angle after the transient. */
  meanAngle: number | null;
  /** rad: largest slow deviation from the upright after the transient. */
  maxDeviation: number | null;
  /** Hz: slow oscillation frequency, when there are enough swings to measure it. */
  slowFrequencyHz: number | null;
  /** Why the case is invalid at this value. */
  error?: string;
}

/** A cell of a basin map (start angle x start rate). */
export type BasinCell = MapCell;

export interface SweepPoint extends MapCell {
  index: number;
  value: number;
  /** Largest |multiplier| of the upright (Infinity: no periodic motion near it; null: invalid case). */
  maxMultiplier: number | null;
}

/** Two neighbouring sweep points whose outcome (or upright verdict) differs. */
export interface ThresholdBracket {
  kind: 'outcome' | 'multiplier';
  lo: number;
  hi: number;
  loOutcome: MotionOutcome | null;
  hiOutcome: MotionOutcome | null;
}

/** A value the bisection evaluated while locating a threshold, and what it found there. */
export interface ThresholdProbe {
  value: number;
  /** Outcome (for 'multiplier': 'holds-upright' when |multiplier| < 1, 'falls' otherwise); null: invalid case. */
  outcome: MotionOutcome | null;
}

export interface SweepThreshold {
  /** 'outcome': the motion outcome changes; 'multiplier': the upright's largest |multiplier| crosses 1. */
  kind: 'outcome' | 'multiplier';
  /** Field value of the change (midpoint of the final bracket). */
  value: number;
  /** Final bracket [below, above]; its width is at most `tolerance`. */
  bracket: [number, number];
  tolerance: number;
  /** Outcome (or for 'multiplier': 'holds-upright' when < 1, 'falls' otherwise) on each side. */
  below: MotionOutcome | null;
  above: MotionOutcome | null;
  /**
   * The bisection's own evaluations in the order made: an outcome named in `below`/`above` may occur only here, not
   * at any sweep point. Left out of the run's result digest (run-record.ts): they are the working behind `value`.
   */
  probes: ThresholdProbe[];
}

export interface SweepResult {
  engineVersion: string;
  field: string;
  spec: SweepSpec;
  values: Float64Array;
  points: SweepPoint[];
  thresholds: SweepThreshold[];
}

/** Progress and cancellation hooks of the chunk functions. */
export interface ChunkHooks {
  onProgress?: (fraction: number) => void;
  shouldCancel?: () => boolean;
}

/** The swept values of a spec. */
export function sweepValues(spec: SweepSpec): Float64Array {
  return axisValues({ field: spec.field, from: spec.from, to: spec.to, count: spec.steps, scale: spec.scale });
}

/** Default threshold tolerance: the point spacing / 64. */
export function sweepTolerance(spec: SweepSpec): number {
  return spec.tolerance ?? Math.abs(spec.to - spec.from) / Math.max(1, spec.steps - 1) / 64;
}

/** The case with fields replaced and validated again; an error message when the result is not a valid case. */
export function variedCase(params: CaseParams, changes: ReadonlyArray<[string, number]>): CaseParams | string {
  let c = params;
  for (const [field, value] of changes) c = setField(c, field, value);
  const parsed = parseCase(c);
  return parsed.ok ? parsed.value : parsed.issues.map((i) => `${i.field}: ${i.message}`).join('; ');
}

/** Motion outcome of one varied case. */
export function motionCell(params: CaseParams, changes: ReadonlyArray<[string, number]>, shouldCancel?: () => boolean): MapCell {
  return cellOf(variedCase(params, changes), shouldCancel);
}

function cellOf(c: CaseParams | string, shouldCancel?: () => boolean): MapCell {
  if (typeof c === 'string') {
    return { outcome: null, meanAngle: null, maxDeviation: null, slowFrequencyHz: null, error: c };
  }
  const m = simulateMotion(c, { shouldCancel });
  return {
    outcome: m.outcome,
    meanAngle: m.outcomeNumbers.meanAngle,
    maxDeviation: m.outcomeNumbers.maxDeviation,
    slowFrequencyHz: m.outcomeNumbers.slowFrequencyHz,
  };
}

/** Sweep points with index in [from, to). Throws EngineCancelledError when cancelled. */
export function sweepPoints(params: CaseParams, spec: SweepSpec, from: number, to: number, hooks: ChunkHooks = {}): SweepPoint[] {
  const values = sweepValues(spec);
  const points: SweepPoint[] = [];
  for (let i = from; i < to; i++) {
    if (hooks.shouldCancel?.()) throw new EngineCancelledError();
    const c = variedCase(params, [[spec.field, values[i]]]);
    const cell = cellOf(c, hooks.shouldCancel);
    const maxMultiplier = typeof c === 'string' ? null : uprightMaxMultiplier(c);
    points.push({ index: i, value: values[i], ...cell, maxMultiplier });
    hooks.onProgress?.((i - from + 1) / (to - from));
  }
  return points;
}

/** Neighbouring points whose outcome differs, and those where the upright's verdict (|multiplier| < 1) flips. */
export function thresholdBrackets(points: readonly SweepPoint[]): ThresholdBracket[] {
  const sorted = [...points].sort((a, b) => a.index - b.index);
  const out: ThresholdBracket[] = [];
  for (let i = 1; i < sorted.length; i++) {
    const a = sorted[i - 1];
    const b = sorted[i];
    if (a.outcome !== null && b.outcome !== null && a.outcome !== b.outcome) {
      out.push({ kind: 'outcome', lo: a.value, hi: b.value, loOutcome: a.outcome, hiOutcome: b.outcome });
    }
    if (a.maxMultiplier !== null && b.maxMultiplier !== null && holdsBy(a.maxMultiplier) !== holdsBy(b.maxMultiplier)) {
      out.push({ kind: 'multiplier', lo: a.value, hi: b.value, loOutcome: verdict(a.maxMultiplier), hiOutcome: verdict(b.maxMultiplier) });
    }
  }
  return out;
}

function holdsBy(maxMultiplier: number): boolean {
  return maxMultiplier < 1 + MULTIPLIER_UNIT_TOLERANCE;
}

function verdict(maxMultiplier: number): MotionOutcome {
  return holdsBy(maxMultiplier) ? 'holds-upright' : 'falls';
}

/**
 * Refines a bracket by bisection until its width is at most the tolerance. The midpoint replaces `lo` when its
 * outcome (or upright verdict) equals lo's, else `hi`, so the bracket always straddles a change away from lo's
 * outcome. Midpoints are geometric for a log sweep.
 */
export function locateThreshold(
  params: CaseParams, spec: SweepSpec, bracket: ThresholdBracket, shouldCancel?: () => boolean,
): SweepThreshold {
  const tolerance = sweepTolerance(spec);
  let lo = bracket.lo;
  let hi = bracket.hi;
  let hiOutcome = bracket.hiOutcome;
  const probes: ThresholdProbe[] = [];
  const evaluate = (x: number): MotionOutcome | null => {
    if (bracket.kind === 'outcome') return motionCell(params, [[spec.field, x]], shouldCancel).outcome;
    const c = variedCase(params, [[spec.field, x]]);
    return typeof c === 'string' ? null : verdict(uprightMaxMultiplier(c));
  };
  for (let i = 0; i < 200 && Math.abs(hi - lo) > tolerance; i++) {
    if (shouldCancel?.()) throw new EngineCancelledError();
    const mid = spec.scale === 'log' && lo > 0 && hi > 0 ? Math.sqrt(lo * hi) : 0.5 * (lo + hi);
    const o = evaluate(mid);
    probes.push({ value: mid, outcome: o });
    if (o === bracket.loOutcome) {
      lo = mid;
    } else {
      hi = mid;
      hiOutcome = o;
    }
  }
  return {
    kind: bracket.kind,
    value: 0.5 * (lo + hi),
    bracket: lo < hi ? [lo, hi] : [hi, lo],
    tolerance,
    below: lo < hi ? bracket.loOutcome : hiOutcome,
    above: lo < hi ? hiOutcome : bracket.loOutcome,
    probes,
  };
}

/** Thresholds for a list of brackets, with progress per bracket. */
export function sweepThresholds(
  params: CaseParams, spec: SweepSpec, brackets: readonly ThresholdBracket[], hooks: ChunkHooks = {},
): SweepThreshold[] {
  return brackets.map((b, i) => {
    const t = locateThreshold(params, spec, b, hooks.shouldCancel);
    hooks.onProgress?.((i + 1) / brackets.length);
    return t;
  });
}

/** Sweep result from its parts (points in any order). */
export function assembleSweep(
  spec: SweepSpec, points: readonly SweepPoint[], thresholds: readonly SweepThreshold[],
): SweepResult {
  return {
    engineVersion: ENGINE_VERSION,
    field: spec.field,
    spec,
    values: sweepValues(spec),
    points: [...points].sort((a, b) => a.index - b.index),
    thresholds: [...thresholds].sort((a, b) => a.value - b.value || a.kind.localeCompare(b.kind)),
  };
}

/** Outcome-map cells for rows [rowFrom, rowTo) of a grid over two case fields, row-major. */
export function outcomeMapRows(params: CaseParams, grid: Grid2, rowFrom: number, rowTo: number, hooks: ChunkHooks = {}): MapCell[] {
  const xs = axisValues(grid.x);
  const ys = axisValues(grid.y);
  const cells: MapCell[] = [];
  const total = (rowTo - rowFrom) * xs.length;
  for (let r = rowFrom; r < rowTo; r++) {
    for (let i = 0; i < xs.length; i++) {
      if (hooks.shouldCancel?.()) throw new EngineCancelledError();
      cells.push(motionCell(params, [[grid.y.field, ys[r]], [grid.x.field, xs[i]]], hooks.shouldCancel));
      hooks.onProgress?.(cells.length / total);
    }
  }
  return cells;
}

/** An outcome map or basin map: cells row-major, index = row * x.count + column. */
export interface CellMap {
  engineVersion: string;
  grid: Grid2;
  xValues: Float64Array;
  yValues: Float64Array;
  cells: MapCell[];
}

/** A map from its cells (computed in one piece or assembled from row chunks in order). */
export function assembleCellMap(grid: Grid2, cells: MapCell[]): CellMap {
  return { engineVersion: ENGINE_VERSION, grid, xValues: axisValues(grid.x), yValues: axisValues(grid.y), cells };
}

/** The default basin grid: start angle over the whole circle (x) by start rate within +-2 sqrt(g/L) (y). */
export function defaultBasinGrid(params: CaseParams, count = 21): Grid2 {
  const w0 = bodyProperties(params.body, params.gravity).naturalFrequency;
  const rate = Math.max(2 * w0, 2 * Math.abs(getField(params, 'start.rate')));
  return {
    x: { field: 'start.angle', from: -Math.PI, to: Math.PI, count },
    y: { field: 'start.rate', from: -rate, to: rate, count },
  };
}

/** Basin-map cells for rows [rowFrom, rowTo): the grid's fields must be start.angle (x) and start.rate (y). */
export function basinMapRows(params: CaseParams, grid: Grid2, rowFrom: number, rowTo: number, hooks: ChunkHooks = {}): BasinCell[] {
  if (grid.x.field !== 'start.angle' || grid.y.field !== 'start.rate') {
    throw new Error('a basin map varies start.angle (x) and start.rate (y)');
  }
  return outcomeMapRows(params, grid, rowFrom, rowTo, hooks);
}
