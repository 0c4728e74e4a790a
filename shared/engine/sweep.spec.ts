import { describe, expect, it } from 'vitest';
import { templateCase, type CaseParams } from '../case';
import { driveLimits } from './floquet';
import { computeRun } from './run-kinds';
import type { MotionOutcome } from './classify';
import { thresholdRoundDepth } from './run-kinds';
import {
  advanceThresholdSearch, basinMapRows, finishThresholdSearch, locateThreshold, outcomeMapRows, startThresholdSearch, sweepPoints,
  sweepTolerance, sweepValues, thresholdBrackets, thresholdRoundValues, thresholdSearchOpen, type SweepResult, type SweepSpec,
  type SweepThreshold, type ThresholdBracket,
} from './sweep';
import type { Grid2 } from './chart';

function shortCase(duration = 3): CaseParams {
  const c = templateCase();
  return { ...c, run: { ...c.run, duration, outputPoints: 400 } };
}

describe('sweep', () => {
  it('finds the upright lost below a drive frequency, at the Floquet lower limit within the stated tolerance', () => {
    const c = shortCase();
    const spec = { field: 'drive.frequency', from: 20, to: 60, steps: 5, tolerance: 0.05 };
    const run = computeRun(c, { kind: 'sweep', spec });
    if (run.kind !== 'sweep') throw new Error(`unexpected ${run.kind} run`);
    const r: SweepResult = run.value;
    expect(r.points.map((p) => p.outcome)).toEqual(['falls', 'falls', 'holds-upright', 'holds-upright', 'holds-upright']);
    const mult = r.thresholds.filter((t) => t.kind === 'multiplier');
    expect(mult.length).toBe(1);
    const limit = driveLimits(c, 'drive.frequency', 1e-7).lower ?? NaN;
    expect(mult[0].bracket[1] - mult[0].bracket[0]).toBeLessThanOrEqual(0.05);
    expect(mult[0].bracket[0]).toBeLessThanOrEqual(limit);
    expect(mult[0].bracket[1]).toBeGreaterThanOrEqual(limit);
    expect(mult[0].below).toBe('falls');
    expect(mult[0].above).toBe('holds-upright');
    const outcome = r.thresholds.filter((t) => t.kind === 'outcome');
    expect(outcome.length).toBeGreaterThan(0);
    // The motion (a finite run) and the Floquet verdict agree on where the upright is lost, to about a hertz.
    expect(Math.abs(outcome[0].value - limit)).toBeLessThan(1.5);
    // The job's parallel rounds (eight bisection steps here, 10 Hz down to 0.05 Hz) end exactly where the serial bisection does.
    expect(r.thresholds).toEqual(thresholdBrackets(r.points).map((b) => locateThreshold(c, spec, b)).sort((a, b) => a.value - b.value || a.kind.localeCompare(b.kind)));
  }, 60_000);

  it('refines in parallel rounds to exactly the serial bisection, at any round depth, for outcomes that change more than once', () => {
    // A made-up outcome with three changes inside the bracket, so which change is found depends on the order of steps.
    const outcomeAt = (x: number): MotionOutcome | null => (x < 0.3 || (x > 0.5 && x < 0.6) ? 'falls' : x < 0.9 ? 'holds-upright' : null);
    const bracket: ThresholdBracket = { kind: 'outcome', lo: 0.05, hi: 1.05, loOutcome: 'falls', hiOutcome: null };
    const inRounds = (spec: SweepSpec, depth: number): { threshold: SweepThreshold; rounds: number; evaluated: number } => {
      const tolerance = sweepTolerance(spec);
      const search = startThresholdSearch(bracket);
      let rounds = 0;
      let evaluated = 0;
      while (thresholdSearchOpen(search, tolerance)) {
        const values = thresholdRoundValues(spec, search, depth, tolerance);
        expect(values.length).toBeLessThanOrEqual(2 ** depth - 1);
        advanceThresholdSearch(spec, search, depth, tolerance, values, values.map(outcomeAt));
        rounds++;
        evaluated += values.length;
      }
      return { threshold: finishThresholdSearch(search, tolerance), rounds, evaluated };
    };
    for (const scale of ['linear', 'log'] as const) {
      const spec: SweepSpec = { field: 'drive.amplitude', from: 0.05, to: 1.05, steps: 2, scale, tolerance: 1e-4 };
      const serial = inRounds(spec, 1);
      expect(serial.rounds).toBe(serial.threshold.probes.length);
      expect(serial.threshold.bracket[1] - serial.threshold.bracket[0]).toBeLessThanOrEqual(1e-4);
      // The linear first midpoint, 0.55, lies on the island, so the bisection ends at its upper edge, not at 0.3.
      expect(serial.threshold.value).toBeCloseTo(scale === 'linear' ? 0.6 : 0.3, 3);
      for (const depth of [2, 3, 4]) {
        const parallel = inRounds(spec, depth);
        expect(parallel.threshold).toEqual(serial.threshold);
        expect(parallel.rounds).toBe(Math.ceil(serial.rounds / depth));
        expect(parallel.evaluated).toBeGreaterThan(serial.rounds);
      }
    }
  });

  it('chooses round depths that give a round at least six motion runs where it can, at most four steps deep', () => {
    expect([0, 1, 2, 3, 5, 6, 20].map(thresholdRoundDepth)).toEqual([3, 3, 2, 2, 2, 1, 1]);
  });

  it('gives the same points however the index range is split', () => {
    const c = shortCase(1);
    const spec = { field: 'drive.amplitude', from: 0.004, to: 0.02, steps: 4 };
    const whole = sweepPoints(c, spec, 0, 4);
    const split = [...sweepPoints(c, spec, 0, 1), ...sweepPoints(c, spec, 1, 4)];
    expect(split).toEqual(whole);
    expect(whole.map((p) => p.value)).toEqual(Array.from(sweepValues(spec)));
  }, 60_000);

  it('marks values that make the case invalid instead of failing the sweep', () => {
    const c = shortCase(1);
    const points = sweepPoints(c, { field: 'body.length', from: -0.1, to: 0.2, steps: 2 }, 0, 2);
    expect(points[0].outcome).toBeNull();
    expect(points[0].error).toMatch(/body\.length/);
    expect(points[1].outcome).toBe('holds-upright');
  }, 60_000);

  it('bisects an outcome bracket down to the tolerance', () => {
    const c = shortCase();
    const t = locateThreshold(c, { field: 'drive.frequency', from: 20, to: 60, steps: 3, tolerance: 0.2 }, {
      kind: 'outcome', lo: 20, hi: 40, loOutcome: 'falls', hiOutcome: 'holds-upright',
    });
    expect(t.bracket[1] - t.bracket[0]).toBeLessThanOrEqual(0.2);
    expect(t.below).toBe('falls');
    expect(t.value).toBeGreaterThan(25);
    expect(t.value).toBeLessThan(35);
    // Every evaluation is kept: each inside the first bracket, and the final bracket's ends are among them.
    expect(t.probes.length).toBeGreaterThan(0);
    for (const p of t.probes) {
      expect(p.value).toBeGreaterThan(20);
      expect(p.value).toBeLessThan(40);
    }
    const ends = [20, 40, ...t.probes.map((p) => p.value)];
    expect(ends).toContain(t.bracket[0]);
    expect(ends).toContain(t.bracket[1]);
    const above = t.probes.find((p) => p.value === t.bracket[1]);
    if (above) expect(above.outcome).toBe(t.above);
  }, 60_000);
});

describe('outcome and basin maps', () => {
  it('map rows are independent of the split and match the 1-D outcomes', () => {
    const c = shortCase(1);
    const grid: Grid2 = {
      x: { field: 'drive.frequency', from: 20, to: 60, count: 3 },
      y: { field: 'drive.amplitude', from: 0.008, to: 0.012, count: 2 },
    };
    const whole = outcomeMapRows(c, grid, 0, 2);
    expect([...outcomeMapRows(c, grid, 0, 1), ...outcomeMapRows(c, grid, 1, 2)]).toEqual(whole);
    expect(whole.length).toBe(6);
    expect(whole[2].outcome).toBe('holds-upright');
  }, 60_000);

  it('basin map: starts near the upright hold, starts near hanging stay down', () => {
    const c = shortCase(2);
    const grid: Grid2 = {
      x: { field: 'start.angle', from: -0.2, to: 3.0, count: 2 },
      y: { field: 'start.rate', from: 0, to: 0, count: 1 },
    };
    const cells = basinMapRows(c, grid, 0, 1);
    expect(cells[0].outcome).toBe('holds-upright');
    expect(cells[1].outcome).toBe('falls');
    expect(() => basinMapRows(c, { ...grid, x: { ...grid.x, field: 'drive.amplitude' } }, 0, 1)).toThrow(/start\.angle/);
  }, 60_000);
});
