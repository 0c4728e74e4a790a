/**
 * Sweeps: the outcome of the full nonlinear motion as one case field varies (1-D, with thresholds), over two fields
 * (outcome map), and over start angle and start rate (basin map).
 *
 * Every point is an independent run of `simulateMotion` on a copy of the case with the field(s) replaced (through
 * setField, then validated again), so the numbers do not depend on how the points are split between workers. The
 * functions take an index range for that split. Thresholds are where the outcome changes between neighbouring
 * points, refined by bisection on the field to a stated absolute tolerance; the largest |Floquet multiplier| of the
 * upright (floquet.ts) is reported per point, and its crossings of 1 are thresholds too. The sweep job runs the
 * bisection in rounds: each round evaluates, in parallel, midpoints the next few steps could try, then takes the
 * steps they answer, so the thresholds are bit for bit those of the serial bisection (`locateThreshold`) however
 * many values a round evaluates ahead.
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
   * Values a parallel round evaluated but the bisection never reached are not listed.
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

/** A threshold being located: its bracket so far and the bisection's evaluations in the order made. */
export interface ThresholdSearch {
  bracket: ThresholdBracket;
  lo: number;
  hi: number;
  hiOutcome: MotionOutcome | null;
  probes: ThresholdProbe[];
}

/** Most bisection steps of one threshold: a guard, a positive tolerance ends the search long before. */
const MAX_BISECTIONS = 200;

/** The search of a bracket found between sweep points, before any bisection. */
export function startThresholdSearch(bracket: ThresholdBracket): ThresholdSearch {
  return { bracket, lo: bracket.lo, hi: bracket.hi, hiOutcome: bracket.hiOutcome, probes: [] };
}

/** The bisection continues while the bracket is wider than the tolerance (and the guard allows). */
export function thresholdSearchOpen(search: ThresholdSearch, tolerance: number): boolean {
  return search.probes.length < MAX_BISECTIONS && Math.abs(search.hi - search.lo) > tolerance;
}

/** The value the bisection tries between a and b: the midpoint, geometric for a log sweep over positive values. */
function bisectionPoint(spec: SweepSpec, a: number, b: number): number {
  return spec.scale === 'log' && a > 0 && b > 0 ? Math.sqrt(a * b) : 0.5 * (a + b);
}

/**
 * At most `steps` bisection steps: the midpoint replaces `lo` when its outcome (or upright verdict) equals lo's,
 * else `hi`, so the bracket always straddles a change away from lo's outcome. Stops early when the search closes
 * or `outcomeAt` has no outcome for the midpoint (undefined).
 */
function bisect(
  spec: SweepSpec, search: ThresholdSearch, tolerance: number, steps: number,
  outcomeAt: (value: number) => MotionOutcome | null | undefined,
): void {
  for (let i = 0; i < steps && thresholdSearchOpen(search, tolerance); i++) {
    const mid = bisectionPoint(spec, search.lo, search.hi);
    const o = outcomeAt(mid);
    if (o === undefined) return;
    search.probes.push({ value: mid, outcome: o });
    if (o === search.bracket.loOutcome) {
      search.lo = mid;
    } else {
      search.hi = mid;
      search.hiOutcome = o;
    }
  }
}

/**
 * The values a round evaluates ahead for a search: up to `budget` midpoints the next bisection steps could try,
 * whatever the outcomes, nearest steps first (breadth first over the tree of midpoints: the next step's midpoint,
 * then both of the step after, and so on; none where a sub-bracket is already within the tolerance). Each is
 * computed by the same arithmetic the bisection uses, so it is the very number a step would try.
 */
export function thresholdRoundValues(spec: SweepSpec, search: ThresholdSearch, budget: number, tolerance: number): number[] {
  const out: number[] = [];
  const queue: Array<[number, number, number]> = [[search.lo, search.hi, 0]];
  for (let i = 0; i < queue.length && out.length < budget; i++) {
    const [lo, hi, level] = queue[i];
    if (search.probes.length + level >= MAX_BISECTIONS || !(Math.abs(hi - lo) > tolerance)) continue;
    const mid = bisectionPoint(spec, lo, hi);
    out.push(mid);
    queue.push([lo, mid, level + 1], [mid, hi, level + 1]);
  }
  return out;
}

/**
 * Advances a search by the bisection steps the round's evaluations answer (`values[i]` had `outcomes[i]`), up to
 * the first step whose midpoint was not evaluated. The steps, and so the final bracket, are exactly those of a
 * bisection that evaluated one midpoint at a time; values off its path were evaluated in case the outcomes went the
 * other way.
 */
export function advanceThresholdSearch(
  spec: SweepSpec, search: ThresholdSearch, tolerance: number, values: readonly number[], outcomes: ReadonlyArray<MotionOutcome | null>,
): void {
  const found = new Map<number, MotionOutcome | null>();
  values.forEach((v, i) => found.set(v, outcomes[i]));
  bisect(spec, search, tolerance, MAX_BISECTIONS, (x) => found.get(x));
}

/** The located threshold: the midpoint of the final bracket. */
export function finishThresholdSearch(search: ThresholdSearch, tolerance: number): SweepThreshold {
  const { bracket, lo, hi, hiOutcome } = search;
  return {
    kind: bracket.kind,
    value: 0.5 * (lo + hi),
    bracket: lo < hi ? [lo, hi] : [hi, lo],
    tolerance,
    below: lo < hi ? bracket.loOutcome : hiOutcome,
    above: lo < hi ? hiOutcome : bracket.loOutcome,
    probes: search.probes,
  };
}

/**
 * Bisection steps the search may still need: along the widest sub-bracket, so an upper estimate (a log sweep's
 * geometric midpoints split a bracket unevenly).
 */
export function thresholdStepsLeft(spec: SweepSpec, search: ThresholdSearch, tolerance: number): number {
  let lo = search.lo;
  let hi = search.hi;
  let n = search.probes.length;
  while (n < MAX_BISECTIONS && Math.abs(hi - lo) > tolerance) {
    const mid = bisectionPoint(spec, lo, hi);
    if (Math.abs(mid - lo) >= Math.abs(hi - mid)) hi = mid;
    else lo = mid;
    n++;
  }
  return n - search.probes.length;
}

/**
 * Outcomes at field values, for a bracket of the given kind: the motion outcome, or for 'multiplier' the upright's
 * verdict ('holds-upright' when |multiplier| < 1, else 'falls'); null where the case is invalid.
 */
export function thresholdOutcomes(
  params: CaseParams, spec: SweepSpec, kind: ThresholdBracket['kind'], values: readonly number[], hooks: ChunkHooks = {},
): Array<MotionOutcome | null> {
  return values.map((x, i) => {
    if (hooks.shouldCancel?.()) throw new EngineCancelledError();
    const o = thresholdOutcome(params, spec, kind, x, hooks.shouldCancel);
    hooks.onProgress?.((i + 1) / values.length);
    return o;
  });
}

function thresholdOutcome(
  params: CaseParams, spec: SweepSpec, kind: ThresholdBracket['kind'], x: number, shouldCancel?: () => boolean,
): MotionOutcome | null {
  if (kind === 'outcome') return motionCell(params, [[spec.field, x]], shouldCancel).outcome;
  const c = variedCase(params, [[spec.field, x]]);
  return typeof c === 'string' ? null : verdict(uprightMaxMultiplier(c));
}

/**
 * Refines a bracket by bisection, one midpoint at a time, until its width is at most the tolerance (see `bisect`).
 * Midpoints are geometric for a log sweep. The sweep job reaches the same steps in parallel rounds
 * (`thresholdRoundValues`); this serial form is the reference they are checked against.
 */
export function locateThreshold(
  params: CaseParams, spec: SweepSpec, bracket: ThresholdBracket, shouldCancel?: () => boolean,
): SweepThreshold {
  const tolerance = sweepTolerance(spec);
  const search = startThresholdSearch(bracket);
  bisect(spec, search, tolerance, MAX_BISECTIONS, (x) => {
    if (shouldCancel?.()) throw new EngineCancelledError();
    return thresholdOutcome(params, spec, bracket.kind, x, shouldCancel);
  });
  return finishThresholdSearch(search, tolerance);
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
