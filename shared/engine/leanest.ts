/**
 * The leanest drive: the drive frequency and amplitude that keep the upright with a stated margin at the least cost
 * (peak acceleration, stroke, force or an electrical power proxy), inside a shaker's or a motor and crank's envelope.
 *
 * Margin. The same number the Margins tab shows for the drive amplitude (floquet.ts driveLimits): at a frequency f,
 * with a_lo(f) and a_up(f) the Floquet lower and upper amplitude limits of the upright, a drive amplitude a holds
 * with margin m when a >= (1 + m) a_lo(f) and a <= (1 - m) a_up(f), i.e. 100 min(a/a_lo - 1, 1 - a/a_up) >= 100 m.
 * The frequency margin at the optimum is reported too (the Margins tab's headline is the smaller of the two).
 *
 * Method. Every cost grows with the amplitude at a fixed frequency, so at each f the cheapest admissible amplitude is
 * the largest of its lower bounds, a*(f) = max((1 + m) a_lo(f), smallest crank radius, amplitude axis start), and
 * the problem is one-dimensional: minimise C(f, a*(f)) over the frequencies where a*(f) meets every upper bound
 * ((1 - m) a_up(f), largest crank radius, rated force, stroke, velocity) and the frequency bounds. C is evaluated on
 * the chart's frequency columns (plus the envelope's frequency ends); around the cheapest admissible column the edges
 * of the admissible set are found by bisection and the interior minimum by golden-section search on log f (Kiefer
 * 1953; Press et al., Numerical Recipes, 3rd ed., section 10.2); the optimum is the cheapest of these. Derivative
 * free: the limits come from bisection on the largest |Floquet multiplier| and have no usable derivative. Assumes
 * C(f, a*(f)) is unimodal between the neighbours of the cheapest column (a column spacing finer than the cost's
 * features); the feasible region is one band per column (the first holding band above the averaged-theory limit).
 *
 * Costs: peak pivot acceleration |s''|max; stroke max s - min s; force (moving mass + body mass) |s''|max, the
 * shaker's rated-sine-force check of sizing.ts (vibration-testing practice); power proxy F v / 2 with F that force and
 * v the peak pivot velocity, which is exactly the peak of the mechanical power M s' s'' = -M a^2 w^3 sin(2 w t) / 2
 * into the moving mass for a sine (derived), and that amplifier and motor ratings are sized by (common practice);
 * coil, amplifier and motor losses are not modelled.
 */
import type { CaseParams } from '../case/case-schema';
import { CASE_LIMITS } from '../case/case-schema';
import { averagedLowerAmplitude } from './averaged';
import { bodyProperties } from './body';
import { axisValues, type Grid2, type StabilityChart } from './chart';
import { driveKinematics } from './drive';
import { driveLimits } from './floquet';
import { EngineCancelledError } from './motion';
import { steadyDrive } from './periodic-system';
import { portable } from './portable-math';
import { pivotReactionPeak, shakerCheck } from './sizing';
import type { ChunkHooks } from './sweep';
import { ENGINE_VERSION } from './version';

const { exp, log } = portable;

export type LeanestCost = 'acceleration' | 'stroke' | 'force' | 'power';

/** The limits of the drive hardware, SI; an absent limit is no limit. */
export interface LeanestEnvelope {
  /** N: a shaker's rated sine force */
  ratedForce?: number;
  /** m: peak-to-peak stroke between stops */
  maxStroke?: number;
  /** m/s: peak velocity */
  maxVelocity?: number;
  /** Hz: lowest and highest drive frequency (a shaker's usable range, a motor's speed range in rev/s) */
  minFrequency?: number;
  maxFrequency?: number;
  /** m: smallest and largest drive amplitude (a crank's radius range) */
  minAmplitude?: number;
  maxAmplitude?: number;
}

export interface LeanestSpec {
  /** Wanted amplitude margin, percent (15 for +15 % above the lower limit and 15 % below the upper). */
  marginPercent: number;
  cost: LeanestCost;
  /** Frequency (x, Hz) by amplitude (y, m): the searched rectangle and the chart the feasible region is shaded on. */
  grid: Grid2;
  /** kg moving with the pivot besides the body (armature, table, fixture; slider and rod share). */
  movingMass: number;
  envelope: LeanestEnvelope;
  /** Relative tolerance of the Floquet limits and of the frequency search. */
  relTolerance: number;
}

/** Everything the search must respect; ids are stable words the UI turns into labels. */
export type LeanestConstraint =
  | 'lower-margin' | 'upper-margin' | 'rated-force' | 'stroke' | 'velocity'
  | 'min-frequency' | 'max-frequency' | 'min-amplitude' | 'max-amplitude' | 'frequency-range' | 'amplitude-range';

/** One constraint at a drive: value against limit, and how much room is left. */
export interface ConstraintUse {
  constraint: LeanestConstraint;
  /** 'at-least' limits bound from below, 'at-most' from above */
  sense: 'at-least' | 'at-most';
  /** SI: the drive's value (amplitude m, frequency Hz, force N, stroke m, velocity m/s) */
  value: number;
  limit: number;
  /** relative room: value/limit - 1 for at-least, 1 - value/limit for at-most; negative when violated */
  slack: number;
}

/** The cheapest admissible drive at one frequency. */
export interface LeanestPoint {
  /** Hz */
  frequency: number;
  /** m: Floquet amplitude limits of the upright at this frequency (null: none in the scanned range) */
  lower: number | null;
  upper: number | null;
  /** m: the cheapest admissible amplitude a*(f) */
  amplitude: number;
  feasible: boolean;
  /** the cost at (f, a*(f)), SI (m/s^2, m, N, W) */
  cost: number;
}

export interface LeanestOptimum {
  /** Hz and m */
  frequency: number;
  amplitude: number;
  /** the chosen cost's value, SI */
  cost: number;
  peakAcceleration: number;
  peakVelocity: number;
  stroke: number;
  /** N: (moving mass + body mass) x peak acceleration */
  force: number;
  /** W: the power proxy F v / 2 */
  power: number;
  /** N: pivot reaction of the body (weight and inertia) at the extreme accelerations */
  pivotForcePeak: number;
  /** m: Floquet amplitude limits at the optimum's frequency */
  lowerLimit: number | null;
  upperLimit: number | null;
  /** percent, as the Margins tab computes them at the optimum */
  amplitudeMarginPercent: number | null;
  frequencyLimits: { lower: number | null; upper: number | null };
  frequencyMarginPercent: number | null;
  /** the smaller of the two (the Margins tab's headline) */
  marginPercent: number | null;
  /** the constraints with (almost) no room left at the optimum */
  binding: LeanestConstraint[];
  constraints: ConstraintUse[];
  /** how the optimum was found: an interior minimum of the cost along the curve, or an edge of the admissible set */
  found: 'interior' | 'edge';
}

/** Per-frequency bounds of the searched rectangle and the envelope. */
interface Bounds {
  fMin: number;
  fMax: number;
  aFrom: number;
  aTo: number;
}

function searchBounds(params: CaseParams, spec: LeanestSpec): Bounds {
  const { x, y } = spec.grid;
  let aTo = Math.max(y.from, y.to);
  const w = params.drive.waveform;
  if (w.kind === 'crank-slider') aTo = Math.min(aTo, 0.999 * w.connectingRod);
  return {
    fMin: Math.min(x.from, x.to),
    fMax: Math.min(Math.max(x.from, x.to), CASE_LIMITS.maxFrequency),
    aFrom: Math.min(y.from, y.to),
    aTo: Math.min(aTo, CASE_LIMITS.maxAmplitude),
  };
}

/** The case at drive (f, a), steady (any ramp removed). */
function atDrive(params: CaseParams, f: number, a: number): CaseParams {
  const steady = steadyDrive(params);
  return { ...steady, drive: { ...steady.drive, frequency: f, amplitude: a } };
}

/** Loads of a drive (f, a) for the costs and the envelope. */
function driveLoads(params: CaseParams, spec: LeanestSpec, f: number, a: number) {
  const steady = atDrive(params, f, a);
  const kin = driveKinematics(steady.drive);
  const body = bodyProperties(steady.body, steady.gravity);
  const env = spec.envelope;
  const shaker = shakerCheck(kin, body.mass, {
    maxForce: env.ratedForce ?? Infinity,
    maxStroke: env.maxStroke ?? Infinity,
    maxVelocity: env.maxVelocity ?? Infinity,
    movingMass: spec.movingMass,
  });
  return {
    peakAcceleration: kin.peakAcceleration,
    peakVelocity: kin.peakVelocity,
    stroke: kin.stroke,
    force: shaker.force,
    power: (shaker.force * kin.peakVelocity) / 2,
    pivotForcePeak: pivotReactionPeak(body.mass, steady.drive.direction, steady.gravity, kin.peakAcceleration),
  };
}

function costOf(loads: ReturnType<typeof driveLoads>, cost: LeanestCost): number {
  switch (cost) {
    case 'acceleration': return loads.peakAcceleration;
    case 'stroke': return loads.stroke;
    case 'force': return loads.force;
    case 'power': return loads.power;
  }
}

/**
 * The Floquet amplitude limits of the upright at frequency f: driveLimits of floquet.ts from a probe amplitude at
 * (1 + m) times the averaged-theory lower limit (or the case's amplitude where that theory gives none), so the band is
 * the one containing the probe or the first above it.
 */
export function amplitudeLimitsAt(params: CaseParams, spec: LeanestSpec, f: number): { lower: number | null; upper: number | null } {
  const averaged = averagedLowerAmplitude(steadyDrive(params), f);
  const probe = averaged !== null && averaged > 0 ? averaged * (1 + spec.marginPercent / 100) : params.drive.amplitude;
  const limits = driveLimits(atDrive(params, f, probe), 'drive.amplitude', spec.relTolerance);
  return { lower: limits.lower, upper: limits.upper };
}

/** Every constraint at the drive (f, a) given the amplitude limits at f. */
export function constraintsAt(
  params: CaseParams, spec: LeanestSpec, f: number, a: number, limits: { lower: number | null; upper: number | null },
): ConstraintUse[] {
  const m = spec.marginPercent / 100;
  const b = searchBounds(params, spec);
  const env = spec.envelope;
  const out: ConstraintUse[] = [];
  const atLeast = (constraint: LeanestConstraint, value: number, limit: number) =>
    out.push({ constraint, sense: 'at-least', value, limit, slack: value / limit - 1 });
  const atMost = (constraint: LeanestConstraint, value: number, limit: number) =>
    out.push({ constraint, sense: 'at-most', value, limit, slack: 1 - value / limit });
  // No band at all at this frequency: nothing holds, whatever the amplitude.
  if (limits.lower === null && limits.upper === null) atMost('upper-margin', a, 0);
  if (limits.lower !== null) atLeast('lower-margin', a, (1 + m) * limits.lower);
  if (limits.upper !== null) atMost('upper-margin', a, (1 - m) * limits.upper);
  atLeast('amplitude-range', a, b.aFrom);
  atMost('amplitude-range', a, b.aTo);
  atLeast('frequency-range', f, b.fMin);
  atMost('frequency-range', f, b.fMax);
  if (env.minAmplitude !== undefined) atLeast('min-amplitude', a, env.minAmplitude);
  if (env.maxAmplitude !== undefined) atMost('max-amplitude', a, env.maxAmplitude);
  if (env.minFrequency !== undefined) atLeast('min-frequency', f, env.minFrequency);
  if (env.maxFrequency !== undefined) atMost('max-frequency', f, env.maxFrequency);
  if (env.ratedForce !== undefined || env.maxStroke !== undefined || env.maxVelocity !== undefined) {
    const loads = driveLoads(params, spec, f, a);
    if (env.ratedForce !== undefined) atMost('rated-force', loads.force, env.ratedForce);
    if (env.maxStroke !== undefined) atMost('stroke', loads.stroke, env.maxStroke);
    if (env.maxVelocity !== undefined) atMost('velocity', loads.peakVelocity, env.maxVelocity);
  }
  return out;
}

/** Relative room below which a constraint counts as binding (well above the limits' bisection tolerance). */
function bindingTolerance(spec: LeanestSpec): number {
  return Math.max(1e-4, 100 * spec.relTolerance);
}

/** The cheapest admissible amplitude at f and whether it meets every upper bound. */
export function leanestPoint(params: CaseParams, spec: LeanestSpec, f: number): LeanestPoint {
  const limits = amplitudeLimitsAt(params, spec, f);
  const m = spec.marginPercent / 100;
  const b = searchBounds(params, spec);
  let amplitude = b.aFrom;
  if (limits.lower !== null) amplitude = Math.max(amplitude, (1 + m) * limits.lower);
  if (spec.envelope.minAmplitude !== undefined) amplitude = Math.max(amplitude, spec.envelope.minAmplitude);
  // Rounding at the bounds (a*(f) equals a lower bound) must not count as a violation.
  const feasible = constraintsAt(params, spec, f, amplitude, limits).every((c) => c.slack >= -1e-12);
  const cost = costOf(driveLoads(params, spec, f, amplitude), spec.cost);
  return { frequency: f, lower: limits.lower, upper: limits.upper, amplitude, feasible, cost };
}

/**
 * The cheapest admissible drive at each of `frequencies` and, when `rows` is given, which cells of those columns
 * are admissible (1) or not (0), column by column: cells[i * rows.length + j] for frequency i and amplitude rows[j].
 */
export function leanestColumns(
  params: CaseParams, spec: LeanestSpec, frequencies: readonly number[], rows: Float64Array | null, hooks: ChunkHooks = {},
): { points: LeanestPoint[]; cells: Float64Array } {
  const points: LeanestPoint[] = [];
  const cells = new Float64Array(rows ? rows.length * frequencies.length : 0);
  frequencies.forEach((f, i) => {
    if (hooks.shouldCancel?.()) throw new EngineCancelledError();
    const point = leanestPoint(params, spec, f);
    points.push(point);
    if (rows) {
      const limits = { lower: point.lower, upper: point.upper };
      rows.forEach((a, j) => {
        cells[i * rows.length + j] = constraintsAt(params, spec, f, a, limits).every((c) => c.slack >= -1e-12) ? 1 : 0;
      });
    }
    hooks.onProgress?.((i + 1) / frequencies.length);
  });
  return { points, cells };
}

/** Frequencies the coarse pass must visit: the chart's columns, and the envelope's ends inside the searched range. */
export function leanestEdgeFrequencies(params: CaseParams, spec: LeanestSpec): number[] {
  const b = searchBounds(params, spec);
  const out: number[] = [];
  for (const f of [spec.envelope.minFrequency, spec.envelope.maxFrequency]) {
    if (f !== undefined && f > b.fMin && f < b.fMax) out.push(f);
  }
  return out;
}

const LOWER_AMPLITUDE_BOUNDS: ReadonlySet<LeanestConstraint> = new Set(['lower-margin', 'min-amplitude']);

/** Golden-section ratio (sqrt 5 - 1) / 2. */
const INV_PHI = (Math.sqrt(5) - 1) / 2;

/**
 * The optimum from the coarse points (any order): the cheapest admissible point, the edges of the admissible set
 * next to it (bisection on admissibility), the cost's minimum between its neighbours (golden section on log f), and
 * the full margins and constraint uses at the winner. Null when no coarse point is admissible.
 */
export function leanestRefine(
  params: CaseParams, spec: LeanestSpec, coarse: readonly LeanestPoint[], hooks: ChunkHooks = {},
): LeanestOptimum | null {
  const points = [...coarse].sort((p, q) => p.frequency - q.frequency);
  let best = -1;
  points.forEach((p, i) => {
    if (p.feasible && (best < 0 || p.cost < points[best].cost)) best = i;
  });
  if (best < 0) return null;
  const tol = Math.max(spec.relTolerance, 1e-9);
  const cache = new Map<number, LeanestPoint>(points.map((p) => [p.frequency, p]));
  // A budget for progress: two bisections and one golden search, each about log2(spacing/tol) steps.
  const budget = 3 * Math.ceil(log(1 / tol) / log(2)) + 4;
  let done = 0;
  const at = (f: number): LeanestPoint => {
    const hit = cache.get(f);
    if (hit) return hit;
    if (hooks.shouldCancel?.()) throw new EngineCancelledError();
    const p = leanestPoint(params, spec, f);
    cache.set(f, p);
    hooks.onProgress?.(Math.min(0.95, ++done / budget));
    return p;
  };
  const candidates: LeanestPoint[] = [points[best]];
  // Edge between an inadmissible and an admissible frequency, to the tolerance in log f; returns the admissible side.
  const edge = (bad: number, good: number): LeanestPoint => {
    let u = log(bad);
    let v = log(good);
    while (Math.abs(u - v) > tol) {
      const mid = exp(0.5 * (u + v));
      if (at(mid).feasible) v = log(mid);
      else u = log(mid);
    }
    return at(exp(v));
  };
  const left = best > 0 ? points[best - 1] : null;
  const right = best < points.length - 1 ? points[best + 1] : null;
  let lo = points[best];
  let hi = points[best];
  if (left) {
    lo = left.feasible ? left : edge(left.frequency, points[best].frequency);
    candidates.push(lo);
  }
  if (right) {
    hi = right.feasible ? right : edge(right.frequency, points[best].frequency);
    candidates.push(hi);
  }
  if (hi.frequency > lo.frequency) {
    const cost = (u: number): number => {
      const p = at(exp(u));
      candidates.push(p);
      return p.feasible ? p.cost : Infinity;
    };
    let a = log(lo.frequency);
    let b = log(hi.frequency);
    let c = b - INV_PHI * (b - a);
    let d = a + INV_PHI * (b - a);
    let fc = cost(c);
    let fd = cost(d);
    while (Math.abs(b - a) > tol) {
      if (fc <= fd) {
        b = d; d = c; fd = fc;
        c = b - INV_PHI * (b - a);
        fc = cost(c);
      } else {
        a = c; c = d; fc = fd;
        d = a + INV_PHI * (b - a);
        fd = cost(d);
      }
    }
  }
  let winner = points[best];
  for (const p of candidates) if (p.feasible && p.cost < winner.cost) winner = p;
  const optimum = describeOptimum(params, spec, winner);
  hooks.onProgress?.(1);
  return optimum;
}

function describeOptimum(params: CaseParams, spec: LeanestSpec, p: LeanestPoint): LeanestOptimum {
  const f = p.frequency;
  const a = p.amplitude;
  const limits = { lower: p.lower, upper: p.upper };
  const constraints = constraintsAt(params, spec, f, a, limits);
  const tol = bindingTolerance(spec);
  const binding = [...new Set(constraints.filter((c) => c.slack <= tol).map((c) => c.constraint))];
  const loads = driveLoads(params, spec, f, a);
  const parts: number[] = [];
  if (p.lower !== null) parts.push(a / p.lower - 1);
  if (p.upper !== null) parts.push(1 - a / p.upper);
  const amplitudeMarginPercent = parts.length ? 100 * Math.min(...parts) : null;
  const fl = driveLimits(atDrive(params, f, a), 'drive.frequency', spec.relTolerance);
  const margins = [amplitudeMarginPercent, fl.marginPercent].filter((x): x is number => x !== null);
  return {
    frequency: f,
    amplitude: a,
    cost: costOf(loads, spec.cost),
    ...loads,
    lowerLimit: p.lower,
    upperLimit: p.upper,
    amplitudeMarginPercent,
    frequencyLimits: { lower: fl.lower, upper: fl.upper },
    frequencyMarginPercent: fl.marginPercent,
    marginPercent: margins.length ? Math.min(...margins) : null,
    binding,
    constraints,
    // Only lower bounds of the amplitude binding: the cost's own minimum along the curve; anything else: an edge.
    found: binding.every((c) => LOWER_AMPLITUDE_BOUNDS.has(c)) ? 'interior' : 'edge',
  };
}

/** The chart's frequency columns and amplitude rows. */
export function leanestAxes(spec: LeanestSpec): { frequencies: Float64Array; amplitudes: Float64Array } {
  return { frequencies: axisValues(spec.grid.x), amplitudes: axisValues(spec.grid.y) };
}

/** A leanest-drive run: the stability chart, the admissible region over it and the optimum. */
export interface LeanestResult {
  engineVersion: string;
  marginPercent: number;
  cost: LeanestCost;
  /** the largest |multiplier| per cell, as the Map tab's chart */
  chart: StabilityChart;
  /** per chart column: Floquet amplitude limits (NaN: none), cheapest admissible amplitude and its cost (NaN: none) */
  columns: { frequency: Float64Array; lower: Float64Array; upper: Float64Array; amplitude: Float64Array; cost: Float64Array };
  /** 1 where the cell's drive is admissible, else 0; row-major like chart.maxMultiplier */
  feasible: Float64Array;
  optimum: LeanestOptimum | null;
}

/** The run's result from the chart, the columns (in column order, with their cells column by column) and the optimum. */
export function assembleLeanest(
  spec: LeanestSpec, chart: StabilityChart, points: readonly LeanestPoint[], cellsByColumn: Float64Array, optimum: LeanestOptimum | null,
): LeanestResult {
  const nx = spec.grid.x.count;
  const ny = spec.grid.y.count;
  const feasible = new Float64Array(nx * ny);
  for (let i = 0; i < nx; i++) for (let j = 0; j < ny; j++) feasible[j * nx + i] = cellsByColumn[i * ny + j];
  const column = (pick: (p: LeanestPoint) => number | null) => Float64Array.from(points, (p) => pick(p) ?? NaN);
  return {
    engineVersion: ENGINE_VERSION,
    marginPercent: spec.marginPercent,
    cost: spec.cost,
    chart,
    columns: {
      frequency: column((p) => p.frequency),
      lower: column((p) => p.lower),
      upper: column((p) => p.upper),
      amplitude: column((p) => (p.feasible ? p.amplitude : null)),
      cost: column((p) => (p.feasible ? p.cost : null)),
    },
    feasible,
    optimum,
  };
}
