/**
 * Stability chart of the upright: the largest |Floquet multiplier| over a grid of two case fields, usually drive
 * frequency (x) by drive amplitude (y), with the case marked and the averaged-theory lower limit drawn.
 *
 * Method. Vertical drive with frequency and amplitude axes (the common chart): the upright's linearisation in drive
 * phase phi = w t is x'' = P(phi) x + C x' with P = (g/w^2 + S''(phi)) / L and C = c / w (S the waveform shape,
 * c = d theta''/d rate at rest: viscous and smoothed friction). Its monodromy over 2 pi is taken by the fourth-order
 * Magnus method with one Richardson step (monodromy.ts); the waveform samples S'' at the Gauss nodes are computed once
 * per amplitude and shared by every frequency, so a cell costs a few hundred flops per step. Other axes or drive
 * directions fall back to the general upright analysis of floquet.ts per cell (Newton on the period map when the
 * upright is not an equilibrium), which is exact but much slower.
 *
 * Every cell is computed independently of the others, so any split of the rows gives identical numbers.
 */
import type { CaseParams } from '../case/case-schema';
import { getField, setField } from '../case/case-fields';
import { averagedLowerAmplitude } from './averaged';
import { bodyProperties } from './body';
import { buildModel, jacobian } from './equations';
import { mathieuMapping } from './mathieu';
import { driveShape } from './drive';
import { magnusMonodromySampled, richardson4, spectralRadius2 } from './monodromy';
import { uprightMaxMultiplier, uprightMotion } from './floquet';
import { steadyDrive } from './periodic-system';
import { ENGINE_VERSION } from './version';
import { portable } from './portable-math';

const { pow, sin } = portable;

/** One axis of a chart or map: a numeric case field sampled at `count` points from `from` to `to`. */
export interface GridAxis {
  field: string;
  from: number;
  to: number;
  count: number;
  /** Spacing of the samples (default linear). */
  scale?: 'linear' | 'log';
}

/** A two-field grid: x varies along a row, y from row to row. */
export interface Grid2 {
  x: GridAxis;
  y: GridAxis;
}

export interface StabilityChart {
  engineVersion: string;
  grid: Grid2;
  xValues: Float64Array;
  yValues: Float64Array;
  /** Largest |multiplier| per cell, row-major: index = row * x.count + column; Infinity: no periodic motion. */
  maxMultiplier: Float64Array;
  /** The case's position on the chart and its own largest |multiplier|. */
  caseMark: { x: number; y: number; maxMultiplier: number };
  /**
   * Averaged-theory lower limit <s'^2> = g L (Kapitza) as amplitude against frequency, sampled on the frequency
   * axis; null unless the axes are drive frequency and amplitude with a vertical drive.
   */
  averagedLowerLimit: { frequency: Float64Array; amplitude: Float64Array } | null;
  /**
   * The same axes in Mathieu form for a vertical sine drive: A = -4g/(L w^2) per column, q = 2a/L per row, so the
   * chart can be drawn over (A, q) with the characteristic curves a0(q), b1(q); null otherwise.
   */
  mathieu: { A: Float64Array; q: Float64Array } | null;
  /** 'magnus' for the fast linear path, 'general' for per-cell Floquet analysis. */
  method: 'magnus' | 'general';
  /** Magnus steps per drive period (coarse pass; the Richardson pass uses twice as many); 0 for 'general'. */
  stepsPerPeriod: number;
}

/** Values of an axis. */
export function axisValues(axis: GridAxis): Float64Array {
  const v = new Float64Array(axis.count);
  for (let i = 0; i < axis.count; i++) {
    const s = axis.count === 1 ? 0 : i / (axis.count - 1);
    v[i] = axis.scale === 'log' ? axis.from * pow(axis.to / axis.from, s) : axis.from + (axis.to - axis.from) * s;
  }
  return v;
}

/** The default chart grid around a case: frequency 0.25x..4x (log) by amplitude 0.1x..10x (log). */
export function defaultChartGrid(params: CaseParams, count = 200): Grid2 {
  const f = params.drive.frequency;
  const a = Math.max(params.drive.amplitude, 1e-6);
  let aTo = 10 * a;
  if (params.drive.waveform.kind === 'crank-slider') aTo = Math.min(aTo, 0.99 * params.drive.waveform.connectingRod);
  return {
    x: { field: 'drive.frequency', from: f / 4, to: f * 4, count, scale: 'log' },
    y: { field: 'drive.amplitude', from: a / 10, to: aTo, count, scale: 'log' },
  };
}

function usesMagnus(params: CaseParams, grid: Grid2): boolean {
  return (
    params.body.kind !== 'chain' &&
    Math.abs(sin(params.drive.direction)) < 1e-12 &&
    grid.x.field === 'drive.frequency' &&
    grid.y.field === 'drive.amplitude'
  );
}

/**
 * Magnus steps per period for the whole chart, from its stiffest corner: h sqrt(max|P| + C^2) <= 1/8, at least 48
 * for a sine and 96 (24 per order of the highest harmonic) otherwise.
 */
function chartSteps(params: CaseParams, grid: Grid2): number {
  const model = buildModel(steadyDrive(params));
  const c = Math.abs(jacobian(model, 0, 0, 0)[1]);
  const fMin = Math.min(grid.x.from, grid.x.to);
  const aMax = Math.max(grid.y.from, grid.y.to);
  const peakShape = model.drive.peakAcceleration / (model.drive.omega * model.drive.omega);
  const aCase = Math.max(params.drive.amplitude, 1e-12);
  const wMin = 2 * Math.PI * fMin;
  const p = (model.g / (wMin * wMin) + (peakShape * aMax) / aCase) / model.L;
  const scale = Math.sqrt(p + (c / wMin) * (c / wMin));
  // Non-sine waveforms carry higher harmonics (sharp crank-slider peaks as r nears l): more steps per period.
  const w = params.drive.waveform;
  const minSteps =
    w.kind === 'sine' ? 48 : w.kind === 'harmonics' ? Math.max(96, 24 * Math.max(...w.terms.map((t) => t.order))) : 96;
  return Math.min(4096, Math.max(minSteps, Math.ceil(8 * scale * 2 * Math.PI)));
}

/**
 * Largest |multiplier| for rows [rowFrom, rowTo) of the grid, row-major. Deterministic per cell.
 * @param onProgress called after each row with the fraction of these rows done
 * @param shouldCancel polled between rows; when true the partial result is returned with `cancelled` set
 */
export function stabilityChartRows(
  params: CaseParams, grid: Grid2, rowFrom: number, rowTo: number,
  onProgress?: (fraction: number) => void, shouldCancel?: () => boolean,
): { values: Float64Array; cancelled: boolean } {
  const steady = steadyDrive(params);
  const xs = axisValues(grid.x);
  const ys = axisValues(grid.y);
  const nx = grid.x.count;
  const values = new Float64Array((rowTo - rowFrom) * nx);
  const rows = rowTo - rowFrom;
  if (!usesMagnus(steady, grid)) {
    for (let r = rowFrom; r < rowTo; r++) {
      if (shouldCancel?.()) return { values, cancelled: true };
      const rowCase = setField(steady, grid.y.field, ys[r]);
      // Continuation along the row: each cell's Newton starts from its left neighbour's periodic motion. Rows
      // start from rest, so the numbers do not depend on how rows are split between workers.
      let guess: [number, number] | undefined;
      for (let i = 0; i < nx; i++) {
        const motion = uprightMotion(setField(rowCase, grid.x.field, xs[i]), guess);
        values[(r - rowFrom) * nx + i] = motion ? motion.maxMultiplier : Infinity;
        guess = motion ? [motion.angle, motion.rate] : undefined;
      }
      onProgress?.((r - rowFrom + 1) / rows);
    }
    return { values, cancelled: false };
  }
  const n = chartSteps(steady, grid);
  const base = buildModel(steady);
  const L = base.L;
  const g = base.g;
  // d theta''/d rate at rest does not depend on the drive.
  const c = jacobian(base, 0, 0, 0)[1];
  const nodes = (steps: number): [Float64Array, Float64Array] => {
    const h = (2 * Math.PI) / steps;
    const n1 = new Float64Array(steps);
    const n2 = new Float64Array(steps);
    const off = Math.sqrt(3) / 6;
    for (let k = 0; k < steps; k++) {
      n1[k] = (k + 0.5 - off) * h;
      n2[k] = (k + 0.5 + off) * h;
    }
    return [n1, n2];
  };
  const [coarse1, coarse2] = nodes(n);
  const [fine1, fine2] = nodes(2 * n);
  const phiStart = steady.run.strobePhase;
  const buffers = {
    s1: new Float64Array(n), s2: new Float64Array(n), f1: new Float64Array(2 * n), f2: new Float64Array(2 * n),
    p1: new Float64Array(n), p2: new Float64Array(n), q1: new Float64Array(2 * n), q2: new Float64Array(2 * n),
    c1: new Float64Array(2 * n),
  };
  for (let r = rowFrom; r < rowTo; r++) {
    if (shouldCancel?.()) return { values, cancelled: true };
    const shape = driveShape({ ...steady.drive, amplitude: ys[r] });
    for (let k = 0; k < n; k++) {
      buffers.s1[k] = shape.d2Phase(phiStart + coarse1[k]);
      buffers.s2[k] = shape.d2Phase(phiStart + coarse2[k]);
    }
    for (let k = 0; k < 2 * n; k++) {
      buffers.f1[k] = shape.d2Phase(phiStart + fine1[k]);
      buffers.f2[k] = shape.d2Phase(phiStart + fine2[k]);
    }
    for (let i = 0; i < nx; i++) {
      const w = 2 * Math.PI * xs[i];
      const gw = g / (w * w);
      const cw = c / w;
      for (let k = 0; k < n; k++) {
        buffers.p1[k] = (gw + buffers.s1[k]) / L;
        buffers.p2[k] = (gw + buffers.s2[k]) / L;
      }
      for (let k = 0; k < 2 * n; k++) {
        buffers.q1[k] = (gw + buffers.f1[k]) / L;
        buffers.q2[k] = (gw + buffers.f2[k]) / L;
      }
      buffers.c1.fill(cw);
      const h = (2 * Math.PI) / n;
      const m = richardson4(
        magnusMonodromySampled(buffers.p1, buffers.c1, buffers.p2, buffers.c1, h, n),
        magnusMonodromySampled(buffers.q1, buffers.c1, buffers.q2, buffers.c1, h / 2, 2 * n),
      );
      values[(r - rowFrom) * nx + i] = spectralRadius2(m);
    }
    onProgress?.((r - rowFrom + 1) / rows);
  }
  return { values, cancelled: false };
}

/** Case mark, averaged lower limit and metadata of a chart whose cell values are already computed. */
export function assembleChart(params: CaseParams, grid: Grid2, maxMultiplier: Float64Array): StabilityChart {
  const steady = steadyDrive(params);
  const magnus = usesMagnus(steady, grid);
  const xValues = axisValues(grid.x);
  let averagedLowerLimit: StabilityChart['averagedLowerLimit'] = null;
  let mathieu: StabilityChart['mathieu'] = null;
  const chainFreqAmp = steady.body.kind === 'chain' && grid.x.field === 'drive.frequency' && grid.y.field === 'drive.amplitude';
  if (chainFreqAmp) {
    // A chain's averaged threshold: <s'^2> = g L with L its slowest swing's length (Acheson's bound; physics.md).
    const amplitude = new Float64Array(xValues.length);
    for (let i = 0; i < xValues.length; i++) amplitude[i] = averagedLowerAmplitude(steady, xValues[i]) ?? NaN;
    averagedLowerLimit = { frequency: Float64Array.from(xValues), amplitude };
  }
  if (magnus) {
    // Averaged upright threshold <s'^2> = g L for the case's waveform (exact crank-slider shape per frequency).
    const amplitude = new Float64Array(xValues.length);
    for (let i = 0; i < xValues.length; i++) amplitude[i] = averagedLowerAmplitude(steady, xValues[i]) ?? NaN;
    averagedLowerLimit = { frequency: Float64Array.from(xValues), amplitude };
    if (steady.drive.waveform.kind === 'sine') {
      const L = bodyProperties(steady.body, steady.gravity).equivalentLength;
      const ys = axisValues(grid.y);
      mathieu = {
        A: Float64Array.from(xValues, (f) => mathieuMapping(L, steady.gravity, 2 * Math.PI * f, 0).A),
        q: Float64Array.from(ys, (a) => mathieuMapping(L, steady.gravity, 1, a).q),
      };
    }
  }
  return {
    engineVersion: ENGINE_VERSION,
    grid,
    xValues,
    yValues: axisValues(grid.y),
    maxMultiplier,
    caseMark: {
      x: getField(steady, grid.x.field),
      y: getField(steady, grid.y.field),
      maxMultiplier: uprightMaxMultiplier(steady),
    },
    averagedLowerLimit,
    mathieu,
    method: magnus ? 'magnus' : 'general',
    stepsPerPeriod: magnus ? chartSteps(steady, grid) : 0,
  };
}

/** The whole chart in one thread (the worker pool splits it into row ranges instead). */
export function stabilityChart(
  params: CaseParams, grid: Grid2 = defaultChartGrid(params), onProgress?: (fraction: number) => void,
): StabilityChart {
  const { values } = stabilityChartRows(params, grid, 0, grid.y.count, onProgress);
  return assembleChart(params, grid, values);
}
