import { describe, expect, it } from 'vitest';
import { templateCase, type CaseParams } from '../../shared/case';
import { stabilityChart, type Grid2 } from '../../shared/engine/chart';
import { MULTIPLIER_UNIT_TOLERANCE } from '../../shared/engine/floquet';
import { mathieuA, mathieuB, mathieuMapping } from '../../shared/engine/mathieu';
import { computeRun, defaultLeanestSettings, type LeanestSettings } from '../../shared/engine/run-kinds';
import { expectNear, expectRelative } from './check';

// Sources: the upright of a vertically driven pendulum is the Mathieu equation with A = -4g/(L w^2), q = 2a/L and
// holds for a0(q) < A < b1(q) (Abramowitz & Stegun ch. 20; docs/physics.md); the averaged (Kapitza) lower limit is
// a^2 w^2 = 2 g L (P. L. Kapitza 1951; Landau & Lifshitz, Mechanics, section 30), so the least peak acceleration on
// it, a w^2 = sqrt(2 g L) w, grows with w (from memory; the exact curve is checked below). The brute force uses only
// chart.ts, a separate code path (Magnus on sampled coefficients) from the limits' bisection in floquet.ts.

const g = 9.80665;
const L = 0.2;
const margin = 0.15;

/** Undamped vertical sine on a 20 cm point mass: the chart is exactly the Mathieu chart. */
function undamped(): CaseParams {
  const c = templateCase();
  return { ...c, damping: { ...c.damping, viscousRatio: 0 } };
}

function logAxis(field: string, from: number, to: number, count: number) {
  return { field, from, to, count, scale: 'log' as const };
}

/** Per column: the lowest holding amplitude row and the last row of that holding band (indices), or null. */
function bands(values: Float64Array, nx: number, ny: number): Array<{ lo: number; hi: number } | null> {
  const out: Array<{ lo: number; hi: number } | null> = [];
  for (let i = 0; i < nx; i++) {
    const holds = (j: number) => values[j * nx + i] < 1 + MULTIPLIER_UNIT_TOLERANCE;
    let lo = 0;
    while (lo < ny && !holds(lo)) lo++;
    if (lo === ny) { out.push(null); continue; }
    let hi = lo;
    while (hi + 1 < ny && holds(hi + 1)) hi++;
    out.push({ lo, hi });
  }
  return out;
}

describe('leanest drive for a vertical sine and peak-acceleration cost (Mathieu chart, A&S ch. 20)', () => {
  const params = undamped();
  const settings: LeanestSettings = {
    ...defaultLeanestSettings(params),
    marginPercent: 100 * margin,
    cost: 'acceleration',
    grid: { x: logAxis('drive.frequency', 2, 80, 30), y: logAxis('drive.amplitude', 0.001, 0.3, 30) } as LeanestSettings['grid'],
  };
  const result = computeRun(params, settings);
  if (result.kind !== 'leanest' || !result.value.optimum) throw new Error('no leanest drive found');
  const opt = result.value.optimum;
  const w = 2 * Math.PI * opt.frequency;

  it('sits on the lower-limit curve with the stated margin: a*/(1 + m) is the lower limit of a brute-force chart column (A&S ch. 20)', () => {
    const rows = 2000;
    const grid: Grid2 = { x: logAxis('drive.frequency', opt.frequency, opt.frequency * 1.0001, 2), y: logAxis('drive.amplitude', 0.01, 0.3, rows) };
    const chart = stabilityChart(params, grid);
    const band = bands(chart.maxMultiplier, 2, rows)[0];
    if (!band) throw new Error('the brute-force column holds nowhere');
    const step = Math.pow(0.3 / 0.01, 1 / (rows - 1)) - 1;
    expectRelative(opt.amplitude / (1 + margin), chart.yValues[band.lo], 1.5 * step, 'a*/(1+m) vs the first holding row of the chart (A&S ch. 20)');
  });

  it('costs no more than the cheapest cell of a brute-force chart that keeps the margin, and sits at its lowest admissible frequency', () => {
    // Independent grid: 60 columns around the optimum, 1500 amplitude rows; a cell keeps the margin when its band
    // holds from a/(1+m) to a/(1-m).
    const nx = 60;
    const ny = 1500;
    const fFrom = opt.frequency / 1.5;
    const fTo = opt.frequency * 1.5;
    const grid: Grid2 = { x: logAxis('drive.frequency', fFrom, fTo, nx), y: logAxis('drive.amplitude', 0.005, 0.4, ny) };
    const chart = stabilityChart(params, grid);
    const perColumn = bands(chart.maxMultiplier, nx, ny);
    let best = Infinity;
    let lowestFeasible = Infinity;
    for (let i = 0; i < nx; i++) {
      const band = perColumn[i];
      if (!band) continue;
      const lower = chart.yValues[band.lo];
      const upper = chart.yValues[band.hi];
      const wi = 2 * Math.PI * chart.xValues[i];
      for (let j = 0; j < ny; j++) {
        const a = chart.yValues[j];
        if (a / (1 + margin) >= lower && a / (1 - margin) <= upper) {
          best = Math.min(best, a * wi * wi);
          lowestFeasible = Math.min(lowestFeasible, chart.xValues[i]);
        }
      }
    }
    const rowStep = Math.pow(0.4 / 0.005, 1 / (ny - 1)) - 1;
    const colStep = Math.pow(fTo / fFrom, 1 / (nx - 1)) - 1;
    // The grid's cheapest admissible cell is within a few row and column steps of the true least cost.
    expect(opt.cost, `optimum ${opt.cost} vs brute force ${best}`).toBeLessThanOrEqual(best * (1 + 3 * rowStep));
    expectRelative(opt.cost, best, 3 * rowStep + 3 * colStep, 'optimum vs cheapest admissible chart cell');
    expectRelative(opt.frequency, lowestFeasible, 2 * colStep, 'optimum vs the lowest admissible chart column');
  });

  it('binds both limits there: a0(q) = A at a*/(1+m) and b1(q) = A at a*/(1-m) (A&S ch. 20, undamped)', () => {
    expect(opt.binding).toEqual(expect.arrayContaining(['lower-margin', 'upper-margin']));
    const A = mathieuMapping(L, g, w, 0).A;
    const qLow = mathieuMapping(L, g, w, opt.amplitude / (1 + margin)).q;
    const qHigh = mathieuMapping(L, g, w, opt.amplitude / (1 - margin)).q;
    expectNear(mathieuA(0, qLow), A, 1e-4 * Math.abs(A), 'a0(q) at the lower limit vs A (A&S 20.2.25)');
    expectNear(mathieuB(1, qHigh), A, 1e-4 * Math.abs(A), 'b1(q) at the upper limit vs A (A&S 20.2.25)');
  });

  it('follows the Kapitza shape: along the exact lower limit the least peak acceleration grows with frequency and a w falls to sqrt(2 g L) (Kapitza 1951)', () => {
    const freqs = [opt.frequency, 2 * opt.frequency, 4 * opt.frequency, 16 * opt.frequency, 64 * opt.frequency];
    const lowers = freqs.map((f) => {
      const wf = 2 * Math.PI * f;
      // the exact lower limit from a0(q) = A by bisection on q (A&S ch. 20), independent of the engine's Floquet code
      const A = -4 * g / (L * wf * wf);
      let qa = 0;
      let qb = 3;
      for (let k = 0; k < 200; k++) {
        const mid = 0.5 * (qa + qb);
        if (mathieuA(0, mid) > A) qa = mid;
        else qb = mid;
      }
      return { f, wf, a: (0.5 * (qa + qb) * L) / 2 };
    });
    for (let k = 1; k < lowers.length; k++) {
      const prev = lowers[k - 1];
      const cur = lowers[k];
      expect(cur.a * cur.wf * cur.wf, `a w^2 at ${cur.f} Hz vs ${prev.f} Hz`).toBeGreaterThan(prev.a * prev.wf * prev.wf);
      expect(cur.a * cur.wf, `a w at ${cur.f} Hz falls towards sqrt(2gL)`).toBeLessThan(prev.a * prev.wf);
      expect(cur.a * cur.wf).toBeGreaterThan(Math.sqrt(2 * g * L));
    }
    const last = lowers[lowers.length - 1];
    expectRelative(last.a * last.wf, Math.sqrt(2 * g * L), 1e-3, 'a w on the exact lower limit far above the optimum vs sqrt(2gL) (Kapitza 1951)');
  });
});
