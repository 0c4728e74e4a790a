import { describe, expect, it } from 'vitest';
import { DEMO_RIGS, demoRigCase, setField, templateCase } from '../case';
import { bodyProperties } from './body';
import { assembleChart, axisValues, defaultChartGrid, stabilityChart, stabilityChartRows, type Grid2 } from './chart';
import { uprightMaxMultiplier } from './floquet';
import { mathieuA, mathieuB } from './mathieu';
import { spectralRadius2 } from './monodromy';
import { periodMap } from './period-map';
import { periodicSystem } from './periodic-system';

describe('stabilityChart', () => {
  it('agrees cell by cell with the per-case Floquet analysis (sine and crank-slider drives)', () => {
    for (const c of [templateCase(), DEMO_RIGS[0].params]) {
      const grid = defaultChartGrid(c, 40);
      const chart = stabilityChart(c, grid);
      const xs = axisValues(grid.x);
      const ys = axisValues(grid.y);
      for (let k = 0; k < 25; k++) {
        const r = (k * 7) % 40;
        const i = (k * 13 + 3) % 40;
        const ref = uprightMaxMultiplier(setField(setField(c, 'drive.amplitude', ys[r]), 'drive.frequency', xs[i]));
        const v = chart.maxMultiplier[r * 40 + i];
        const tol = 1e-6 * Math.max(1, ref);
        expect(Math.abs(v - ref), `cell (${r}, ${i}): chart ${v}, Floquet ${ref}, tol ${tol}`).toBeLessThan(tol);
      }
    }
  });

  it('agrees with the odex integration of the variational equations (independent integrator)', () => {
    const c = DEMO_RIGS[0].params;
    const grid = defaultChartGrid(c, 12);
    const chart = stabilityChart(c, grid);
    const xs = axisValues(grid.x);
    const ys = axisValues(grid.y);
    for (const [r, i] of [[0, 0], [3, 7], [6, 5], [9, 2], [11, 11]]) {
      const cell = setField(setField(c, 'drive.amplitude', ys[r]), 'drive.frequency', xs[i]);
      const ref = spectralRadius2(periodMap(periodicSystem(cell), 0, 0).monodromy);
      const v = chart.maxMultiplier[r * 12 + i];
      expect(Math.abs(v - ref), `cell (${r}, ${i}): chart ${v}, odex ${ref}`).toBeLessThan(1e-6 * Math.max(1, ref));
    }
  });

  it('marks holding cells exactly inside the undamped Mathieu band a0(q) < A < b1(q) (A&S ch. 20)', () => {
    const c = setField(templateCase(), 'damping.viscousRatio', 0);
    const grid = defaultChartGrid(c, 30);
    const chart = stabilityChart(c, grid);
    let checked = 0;
    let insideCount = 0;
    for (let r = 0; r < 30; r++) {
      for (let i = 0; i < 30; i++) {
        const w = 2 * Math.PI * chart.xValues[i];
        const A = -4 * c.gravity / (0.2 * w * w);
        const q = 2 * chart.yValues[r] / 0.2;
        const lo = mathieuA(0, q);
        const hi = mathieuB(1, q);
        // Skip cells within 1e-3 (relative) of a boundary, where the verdict is a matter of rounding.
        if (Math.min(Math.abs(A - lo), Math.abs(A - hi)) < 1e-3 * Math.max(Math.abs(A), Math.abs(lo))) continue;
        const inside = A > lo && A < hi;
        const holds = chart.maxMultiplier[r * 30 + i] < 1 + 1e-7;
        expect(holds, `A ${A}, q ${q}, a0 ${lo}, b1 ${hi}`).toBe(inside);
        checked++;
        if (inside) insideCount++;
      }
    }
    expect(checked).toBeGreaterThan(850);
    expect(insideCount).toBeGreaterThan(100);
    expect(checked - insideCount).toBeGreaterThan(100);
  });

  it('follows the periodic motion near the upright for an oblique drive (general path, Newton per cell)', () => {
    const c = setField(templateCase(), 'drive.direction', 0.2);
    const grid = defaultChartGrid(c, 6);
    const chart = stabilityChart(c, grid);
    expect(chart.method).toBe('general');
    const xs = axisValues(grid.x);
    const ys = axisValues(grid.y);
    let holding = 0;
    for (let r = 0; r < 6; r++) {
      for (let i = 0; i < 6; i++) {
        const ref = uprightMaxMultiplier(setField(setField(c, 'drive.amplitude', ys[r]), 'drive.frequency', xs[i]));
        const v = chart.maxMultiplier[r * 6 + i];
        if (Number.isFinite(ref)) expect(Math.abs(v - ref), `cell (${r}, ${i}): ${v} vs ${ref}`).toBeLessThan(1e-6 * ref);
        else expect(v).toBe(Infinity);
        if (v < 1) holding++;
      }
    }
    expect(holding).toBeGreaterThan(0);
    const split = [...stabilityChartRows(c, grid, 0, 2).values, ...stabilityChartRows(c, grid, 2, 6).values];
    expect(split).toEqual(Array.from(chart.maxMultiplier));
  }, 60_000);

  it('gives identical numbers however the rows are split', () => {
    const c = DEMO_RIGS[1].params;
    const grid: Grid2 = defaultChartGrid(c, 24);
    const whole = stabilityChartRows(c, grid, 0, 24).values;
    const parts = [stabilityChartRows(c, grid, 0, 5), stabilityChartRows(c, grid, 5, 17), stabilityChartRows(c, grid, 17, 24)];
    const joined = new Float64Array(whole.length);
    let at = 0;
    for (const p of parts) {
      joined.set(p.values, at);
      at += p.values.length;
    }
    expect(Array.from(joined)).toEqual(Array.from(whole));
  });

  it('marks the case and draws the averaged lower limit a w = sqrt(2 g L) for a sine (Kapitza)', () => {
    const c = templateCase();
    const grid = defaultChartGrid(c, 10);
    const chart = assembleChart(c, grid, new Float64Array(100));
    expect(chart.caseMark.x).toBeCloseTo(40, 12);
    expect(chart.caseMark.y).toBeCloseTo(0.01, 12);
    expect(chart.caseMark.maxMultiplier).toBeLessThan(1);
    const lim = chart.averagedLowerLimit;
    expect(lim).not.toBeNull();
    const f = lim?.frequency[3] ?? NaN;
    const a = lim?.amplitude[3] ?? NaN;
    const ref = Math.sqrt(2 * c.gravity * 0.2) / (2 * Math.PI * f);
    expect(Math.abs(a - ref) / ref).toBeLessThan(1e-3);
  });

  it('gives the Mathieu coordinates of the axes, A = -4g/(L w^2) and q = 2a/L (A&S ch. 20)', () => {
    const c = templateCase();
    const grid = defaultChartGrid(c, 5);
    const chart = assembleChart(c, grid, new Float64Array(25));
    const w = 2 * Math.PI * chart.xValues[2];
    expect(Math.abs((chart.mathieu?.A[2] ?? NaN) + 4 * c.gravity / (0.2 * w * w))).toBeLessThan(1e-12);
    expect(Math.abs((chart.mathieu?.q[4] ?? NaN) - 2 * chart.yValues[4] / 0.2)).toBeLessThan(1e-12);
    const crank = assembleChart(DEMO_RIGS[0].params, defaultChartGrid(DEMO_RIGS[0].params, 5), new Float64Array(25));
    expect(crank.mathieu).toBeNull();
    expect(Array.from(crank.averagedLowerLimit?.amplitude ?? []).every((a) => a > 0)).toBe(true);
  });

  it('computes a 200 x 200 chart of a sine drive in well under the few-seconds budget on one core', () => {
    const c = templateCase();
    const t0 = performance.now();
    const chart = stabilityChart(c, defaultChartGrid(c, 200));
    const ms = performance.now() - t0;
    expect(chart.maxMultiplier.length).toBe(40000);
    expect(ms).toBeLessThan(6000);
  });

  it('charts a chain cell by cell with its Floquet multipliers and draws its averaged lower limit (Acheson bound, physics.md Chains)', () => {
    const c = demoRigCase('two-link-shaker');
    if (!c) throw new Error('two-link demo missing');
    const grid = defaultChartGrid(c, 4);
    const chart = stabilityChart(c, grid);
    expect(chart.method).toBe('general');
    const xs = chart.xValues;
    const ys = chart.yValues;
    for (const [r, i] of [[0, 0], [3, 3], [2, 1]]) {
      const cell = setField(setField(c, 'drive.amplitude', ys[r]), 'drive.frequency', xs[i]);
      expect(chart.maxMultiplier[r * 4 + i]).toBe(uprightMaxMultiplier(cell));
    }
    const L = bodyProperties(c.body, c.gravity).equivalentLength;
    const f = xs[1];
    expect(chart.averagedLowerLimit?.amplitude[1]).toBeCloseTo(Math.sqrt(2 * c.gravity * L) / (2 * Math.PI * f), 12);
  });
});
