import { describe, expect, it } from 'vitest';
import { templateCase, type CaseParams } from '../case';
import { driveLimits } from './floquet';
import { computeRun, runJob, thresholdRoundBudgets } from './run-kinds';
import type { MotionOutcome } from './classify';
import { computeTask, type TaskResult } from './engine-task';
import { runJobInThread } from './run-job';
import { resultDigest } from './run-record';
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
    // Rounds for 4 workers (eight bisection steps here, 10 Hz down to 0.05 Hz, about three per round) end exactly
    // where the serial bisection does, with the same probes.
    const serial = thresholdBrackets(r.points).map((b) => locateThreshold(c, spec, b));
    expect(r.thresholds).toEqual([...serial].sort((a, b) => a.value - b.value || a.kind.localeCompare(b.kind)));
    const four = runJobInThread(runJob(c, { kind: 'sweep', spec }, { workers: 4 }));
    if (four.kind !== 'sweep') throw new Error(`unexpected ${four.kind} run`);
    expect(four.value).toEqual(r);
  }, 60_000);

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

  it('refines in parallel rounds to exactly the serial bisection, however many values a round evaluates, for outcomes that change more than once', () => {
    // A made-up outcome with three changes inside the bracket, so which change is found depends on the order of steps.
    const outcomeAt = (x: number): MotionOutcome | null => (x < 0.3 || (x > 0.5 && x < 0.6) ? 'falls' : x < 0.9 ? 'holds-upright' : null);
    const bracket: ThresholdBracket = { kind: 'outcome', lo: 0.05, hi: 1.05, loOutcome: 'falls', hiOutcome: null };
    const inRounds = (spec: SweepSpec, budget: number): { threshold: SweepThreshold; rounds: number; evaluated: number } => {
      const tolerance = sweepTolerance(spec);
      const search = startThresholdSearch(bracket);
      let rounds = 0;
      let evaluated = 0;
      while (thresholdSearchOpen(search, tolerance)) {
        const values = thresholdRoundValues(spec, search, budget, tolerance);
        expect(values.length).toBeLessThanOrEqual(budget);
        const before = search.probes.length;
        advanceThresholdSearch(spec, search, tolerance, values, values.map(outcomeAt));
        // The round's tree holds every path floor(log2(budget + 1)) steps deep.
        expect(search.probes.length - before).toBeGreaterThanOrEqual(thresholdSearchOpen(search, tolerance) ? Math.floor(Math.log2(budget + 1)) : 1);
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
      for (const budget of [2, 3, 4, 7, 8]) {
        const parallel = inRounds(spec, budget);
        expect(parallel.threshold).toEqual(serial.threshold);
        expect(parallel.rounds).toBeLessThanOrEqual(Math.ceil(serial.rounds / Math.floor(Math.log2(budget + 1))));
        expect(parallel.evaluated).toBeGreaterThan(serial.rounds);
      }
    }
  });

  it('gives the serial thresholds when replayed over stored results planned for another worker count, or in one task per bracket', () => {
    const c = shortCase();
    const settings = { kind: 'sweep' as const, spec: { field: 'drive.frequency', from: 20, to: 60, steps: 5, tolerance: 0.05 } };
    const serial = computeRun(c, settings);
    // Stages computed for 4 workers, then a replay for 2 workers fed those results, computing only what it lacks.
    const stored: TaskResult[][] = [];
    const four = runJob(c, settings, { workers: 4 });
    for (let step = four.next(); !step.done; ) {
      const results = step.value.tasks.map((t) => computeTask(t));
      stored.push(results);
      step = four.next(results);
    }
    const two = runJob(c, settings, { workers: 2 });
    let step = two.next();
    for (let stage = 0; !step.done; stage++) step = two.next(stored[stage] ?? step.value.tasks.map((t) => computeTask(t)));
    expect(resultDigest(step.value)).toBe(resultDigest(serial));
    expect(step.value).toEqual(serial);
    const queued = runJobInThread(runJob(c, settings, { workers: 1, costlyStages: true }));
    expect(queued).toEqual(serial);
  }, 60_000);

  it('shares the workers out over the outcome brackets of a round; one value each in this thread', () => {
    expect(thresholdRoundBudgets(1, ['outcome', 'multiplier', 'outcome'])).toEqual([1, 1, 1]);
    expect(thresholdRoundBudgets(2, ['outcome', 'multiplier'])).toEqual([2, 7]);
    expect(thresholdRoundBudgets(8, ['outcome', 'outcome', 'outcome'])).toEqual([3, 3, 2]);
    expect(thresholdRoundBudgets(2, ['outcome', 'outcome', 'outcome'])).toEqual([1, 1, 1]);
    expect(thresholdRoundBudgets(4, ['multiplier'])).toEqual([7]);
  });
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
