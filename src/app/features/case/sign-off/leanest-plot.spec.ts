import { describe, expect, it } from 'vitest';

import { templateCase } from '../../../../../shared/case/templates';
import { computeRun, defaultLeanestSettings } from '../../../../../shared/engine/run-kinds';
import type { LeanestResult } from '../../../../../shared/engine/leanest';
import { DEFAULT_UNITS } from '../../../core/units/display-units';
import { leanestPlot } from './leanest-plot';

function search(): LeanestResult {
  const c = templateCase();
  const d = defaultLeanestSettings(c);
  const r = computeRun(c, {
    ...d, relTolerance: 1e-4,
    grid: { x: { ...d.grid.x, from: 2, to: 80, count: 8 }, y: { ...d.grid.y, from: 0.001, to: 0.2, count: 6 } },
  });
  if (r.kind !== 'leanest') throw new Error('not a leanest result');
  return r.value;
}

describe('leanestPlot', () => {
  const r = search();
  const p = leanestPlot(r, DEFAULT_UNITS);

  it('veils exactly the cells that keep the margin', () => {
    const veil = p.data.find((t) => t['type'] === 'heatmap' && t['name'] === 'keeps the margin');
    const z = (veil?.['z'] ?? []) as Array<Array<number | null>>;
    const veiled = z.flat().filter((v) => v === 1).length;
    expect(veiled).toBe(Array.from(r.feasible).filter((v) => v === 1).length);
    expect(veiled).toBeGreaterThan(0);
  });

  it('marks the leanest drive in mm and Hz', () => {
    const mark = p.data.find((t) => t['name'] === 'leanest drive');
    const x = (mark?.['x'] as number[])[0];
    // display values are rounded to 12 significant digits
    expect(Math.abs(x / (r.optimum?.frequency ?? NaN) - 1)).toBeLessThan(1e-11);
    const y = (mark?.['y'] as number[])[0];
    expect(Math.abs(y / (1000 * (r.optimum?.amplitude ?? NaN)) - 1)).toBeLessThan(1e-9);
  });

  it('exports every cell with its multiplier and whether it keeps the margin', () => {
    expect(p.csv.columns.map((c) => c.header)).toEqual(['drive frequency', 'drive amplitude', 'largest |multiplier|', 'keeps the margin']);
    expect(p.csv.rows).toHaveLength(48);
    expect(p.csv.rows.filter((row) => row[3] === 'yes')).toHaveLength(Array.from(r.feasible).filter((v) => v === 1).length);
  });
});
